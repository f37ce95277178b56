// fontkit ships no types; the certificate renderer only parses fonts once and hands them to pdfkit.
declare module 'fontkit' {
  export function create(buffer: Uint8Array, postscriptName?: string): { layout: (text: any, features?: any) => any; postscriptName: string }
}
