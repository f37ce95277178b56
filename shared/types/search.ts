// What the header's search box finds (GET /api/search?q=): serials, lots and parts whose identifier starts with q.

export type SearchUnit = { serial: string; partNumber: string; lot: string }
export type SearchLot = { code: string; partNumber: string; status: string; engineering: boolean }
export type SearchPart = { partNumber: string; name: string }

export type SearchGroup<T> = { items: T[]; more: boolean }

export type SearchResults = {
  q: string
  units: SearchGroup<SearchUnit>
  lots: SearchGroup<SearchLot>
  parts: SearchGroup<SearchPart>
}
