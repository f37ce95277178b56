import { receivedView } from '../../../services/mail/views'

export default defineEventHandler(() => receivedView())
