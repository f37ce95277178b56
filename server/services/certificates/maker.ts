// Who issues certificates and how their numbers and public links read. One place, overridable by environment so an
// installation states its own identity; the defaults are the invented demo maker.

export type MakerIdentity = { name: string; address: string[]; numberPrefix: string; siteUrl: string }

export function makerIdentity(env: NodeJS.ProcessEnv = process.env): MakerIdentity {
  return {
    name: env.TERCET_MAKER_NAME || 'Vellmar Frequency Works',
    address: (env.TERCET_MAKER_ADDRESS || 'Quarry Lane 14|Vellmar Industrial Park|Demo County').split('|').map((s) => s.trim()).filter(Boolean),
    numberPrefix: env.TERCET_CERT_PREFIX || 'VFW-C',
    siteUrl: (env.NUXT_PUBLIC_SITE_URL || 'http://localhost:3000').replace(/\/+$/, ''),
  }
}

/** "VFW-C-2026-000123": the prefix, the year of issue and the year's running number. */
export function certificateNumber(prefix: string, year: number, n: number): string {
  return `${prefix}-${year}-${String(n).padStart(6, '0')}`
}

export function verifyUrl(siteUrl: string, code: string): string {
  return `${siteUrl}/verify/${code}`
}
