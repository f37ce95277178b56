import { formatFixed, formatQuantity } from '#shared/utils/value-format'
import type { ApexOptions } from 'apexcharts'
import { formatFrequency } from '#shared/utils/measurement-names'
import { decadeRange, logFrequencyLabel } from '#shared/utils/phase-noise-plot'

// ApexCharts has no logarithmic x axis: phase-noise charts plot offsets as log10(Hz) and label them back in Hz.

/** Whole decades spanning the positive offsets given (100 Hz to 1 MHz when there are none). */
export function offsetDecades(offsetsHz: number[]): [number, number] {
  const fs = offsetsHz.filter((f) => f > 0)
  return fs.length ? decadeRange(Math.min(...fs), Math.max(...fs)) : [2, 6]
}

/** A point at an offset, on the log10 axis. */
export { chartPoint as atOffset } from '#shared/utils/phase-noise-mask'

export function phaseNoiseAxes(range: [number, number], yTitle: string): Pick<ApexOptions, 'xaxis' | 'yaxis' | 'tooltip'> {
  return {
    xaxis: {
      type: 'numeric', min: range[0], max: range[1], tickAmount: range[1] - range[0],
      title: { text: 'offset from carrier' }, labels: { formatter: (v: string | number) => logFrequencyLabel(Number(v)) }, tooltip: { enabled: false },
    },
    yaxis: { title: { text: yTitle }, labels: { formatter: (v: number) => formatFixed(v, 0) } },
    tooltip: {
      shared: false, intersect: true,
      x: { formatter: (v: number) => formatFrequency(Number.parseFloat((10 ** v).toPrecision(4))) },
      y: { formatter: (v: number) => formatQuantity(v, 'dBc/Hz') },
    },
  }
}
