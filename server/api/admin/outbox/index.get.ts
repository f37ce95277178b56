import { outboxView } from '../../../services/mail/views'

export default defineEventHandler(() => outboxView(useDb()))
