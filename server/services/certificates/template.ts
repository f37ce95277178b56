/** The layout version of the certificate document, stored on each row so a document can always be rendered as issued. */
export const TEMPLATE_VERSION = 1
