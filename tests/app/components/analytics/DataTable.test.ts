// The CSV button of DataTable (capability, trends, station comparison… tables) writes the file through the shared
// cell writer: names that a spreadsheet would run as formulas get a leading apostrophe, numbers stay numbers.
import { describe, expect, it, vi } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import DataTable from '~/components/analytics/DataTable.vue'

const saved: { blob: Blob; name: string }[] = []
vi.mock('~/utils/save-blob', () => ({ saveBlob: (blob: Blob, name: string) => { saved.push({ blob, name }) } }))

describe('DataTable CSV', () => {
  it('escapes formula-looking text cells and leaves negative numbers as numbers', async () => {
    const w = await mountSuspended(DataTable, {
      props: {
        label: 'Stations', csvName: 'stations',
        columns: [
          { accessorKey: 'station', header: 'station' },
          { accessorKey: 'mean', header: 'mean', meta: { num: true, unit: 'dBm' } },
        ],
        data: [
          { station: '=HYPERLINK("http://x.invalid","open")', mean: -3.2 },
          { station: '@SUM(1)', mean: 2.5 },
          { station: 'ATE-T3-01', mean: -0.125 },
        ],
      },
    })
    await w.get('[data-test="csv"]').trigger('click')
    expect(saved).toHaveLength(1)
    expect(saved[0]!.name).toBe('stations.csv')
    const text = await saved[0]!.blob.text()
    expect(text).toBe([
      'station,mean [dBm]',
      `"'=HYPERLINK(""http://x.invalid"",""open"")",-3.2`,
      "'@SUM(1),2.5",
      'ATE-T3-01,-0.125',
      '',
    ].join('\r\n'))
  })
})
