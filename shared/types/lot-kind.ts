// Engineering and trial lots: the product's code patterns (GET/PUT /api/products/:partNumber/engineering-pattern)
// and a lot's mark (PUT /api/lots/:code/engineering).

export type EngineeringSource = 'pattern' | 'hand'

export type EngineeringPatternView = {
  partNumber: string
  /** as stored: patterns separated by a comma and a space; null for none */
  pattern: string | null
  patterns: string[]
  /** lots of the product marked engineering now */
  engineeringLots: number
}

export type LotKindView = { code: string; engineering: boolean; engineeringSource: EngineeringSource | null; changed: boolean }

/** How the cross-lot views treat engineering lots: left out unless the address asks for them (`engineering=include`). */
export type EngineeringScope = 'exclude' | 'include'
