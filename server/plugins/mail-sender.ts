import { senderId, senderPolicy, sendDueMail } from '../services/mail/sender'
import { smtpSettings } from '../services/mail/settings'
import { smtpDeliver } from '../services/mail/transport'
import { repeatEvery } from '../utils/repeating-task'

// Sends queued e-mail every second. Without TERCET_SMTP_HOST nothing is sent and messages wait in the outbox.
export default defineNitroPlugin((nitro) => {
  const settings = smtpSettings()
  if (!settings) return
  const deliver = smtpDeliver(settings)
  const owner = senderId()
  const policy = senderPolicy()
  repeatEvery(nitro, 1000, 'sending mail', () => sendDueMail(useDb(), deliver, owner, policy))
})
