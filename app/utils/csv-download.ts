import { toCsvDocument, type CsvValue } from '#shared/utils/csv'

/** Saves rows as a CSV file in the browser (values as the API sent them, not as rounded on screen). */
export function downloadCsv(filename: string, header: string[], rows: CsvValue[][]): void {
  const blob = new Blob([toCsvDocument(header, rows)], { type: 'text/csv;charset=utf-8' })
  const url = URL.createObjectURL(blob)
  const a = document.createElement('a')
  a.href = url
  a.download = filename
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(url), 1000)
}
