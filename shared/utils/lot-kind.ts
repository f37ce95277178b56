// Which lot codes a product treats as engineering or trial builds: a list of code patterns separated by commas.
// In a pattern `*` stands for any run of characters (none included) and `?` for exactly one; everything else is
// itself. Letters match regardless of case and a pattern must cover the whole code: `ENG-*` marks ENG-0042,
// `*-E` marks X8-2612-E, `T3-2?12-*` marks T3-2612-B and T3-2712-A.

export const MAX_PATTERNS = 8
const PATTERN = /^[A-Za-z0-9._*?-]{1,32}$/

export type PatternCheck = { patterns: string[]; problems: string[] }

/** The patterns of a setting ('' or null: none), with what is wrong with any of them. */
export function parseLotPatterns(text: string | null | undefined): PatternCheck {
  const patterns = (text ?? '').split(',').map((p) => p.trim()).filter(Boolean)
  const problems: string[] = []
  for (const p of patterns) {
    if (!PATTERN.test(p)) problems.push(`"${p}": use 1 to 32 letters, digits, dots, dashes, underscores, * and ?`)
    else if (/^\*+$/.test(p)) problems.push(`"${p}" would mark every lot`)
  }
  if (patterns.length > MAX_PATTERNS) problems.push(`at most ${MAX_PATTERNS} patterns`)
  if (new Set(patterns.map((p) => p.toUpperCase())).size !== patterns.length) problems.push('a pattern is listed twice')
  return { patterns, problems }
}

function toRegExp(pattern: string): RegExp {
  // only . is special among the characters a pattern may hold (- means itself outside brackets)
  const body = pattern.replace(/\./g, '\\.').replace(/\*/g, '.*').replace(/\?/g, '.')
  return new RegExp(`^${body}$`, 'i')
}

/** Whether a lot code matches one of the patterns. */
export function matchesLotPattern(code: string, patterns: string[]): boolean {
  return patterns.some((p) => PATTERN.test(p) && toRegExp(p).test(code))
}

/** The patterns as the product stores them (trimmed, one comma and space between), or null for none. */
export function normaliseLotPatterns(patterns: string[]): string | null {
  return patterns.length ? patterns.join(', ') : null
}
