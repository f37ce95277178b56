import { appSettings } from '../../services/settings'

export default defineEventHandler(() => appSettings(useDb()))
