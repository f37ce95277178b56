/** The layout version of the certificate document, stored on each row so a document can always be rendered as issued. */
export const TEMPLATE_VERSION = 2
/** Versions the renderer still draws: 1 wrote values as posted, 2 writes them as every page does (value-format.ts). */
export const KNOWN_TEMPLATE_VERSIONS: readonly number[] = [1, 2]
