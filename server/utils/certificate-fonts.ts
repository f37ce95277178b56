import { FONT_FILES, type CertificateFonts } from '../services/certificates/fonts'

let loading: Promise<CertificateFonts> | undefined

/** The certificate fonts from the server's bundled assets (node_modules is not there in a built server). */
export function certificateFonts(): Promise<CertificateFonts> {
  loading ??= (async () => {
    const read = async (k: keyof CertificateFonts) => {
      const store = FONT_FILES[k].pkg === '@fontsource/inter' ? 'assets:certfonts-sans' : 'assets:certfonts-mono'
      const raw = await useStorage(store).getItemRaw(FONT_FILES[k].file)
      if (!raw) throw new Error(`certificate font ${FONT_FILES[k].file} is missing from the server assets`)
      return Buffer.from(raw as Uint8Array)
    }
    return { sans: await read('sans'), sansBold: await read('sansBold'), mono: await read('mono'), monoBold: await read('monoBold') }
  })().catch((e) => { loading = undefined; throw e })
  return loading
}
