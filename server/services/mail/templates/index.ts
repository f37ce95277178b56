export { shipmentReleased, shipmentPortalUrl, type ShipmentReleasedInput } from './shipment-released'
export { passwordReset, type PasswordResetInput } from './password-reset'
export { escapeHtml, type RenderedMail } from './layout'
