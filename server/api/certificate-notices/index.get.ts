import { noticesForQuality } from '../../services/certificates/notices'

export default defineEventHandler(async () => noticesForQuality(useDb()))
