import { toCsvDocument, type CsvValue } from '#shared/utils/csv'
import { saveBlob } from './save-blob'

/** Saves rows as a CSV file in the browser (values as the API sent them, not as rounded on screen). */
export function downloadCsv(filename: string, header: string[], rows: CsvValue[][]): void {
  saveBlob(new Blob([toCsvDocument(header, rows)], { type: 'text/csv;charset=utf-8' }), filename)
}
