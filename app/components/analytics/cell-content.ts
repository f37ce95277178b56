import { flexRender } from '@tanstack/vue-table'
import type { FunctionalComponent, VNodeChild } from 'vue'

/**
 * What the table library's FlexRender draws for a cell or a header, as a functional component: a table of some
 * hundreds of cells then hydrates without a component instance (props, render effect) per cell. The tables here
 * neither group nor aggregate rows, so a cell is always its column's `cell`.
 */
export const CellContent: FunctionalComponent<{ cell?: any; header?: any }> = ({ cell, header }): VNodeChild => {
  if (cell) return flexRender(cell.column.columnDef.cell, cell.getContext()) as VNodeChild
  return header ? flexRender(header.column.columnDef.header, header.getContext()) as VNodeChild : null
}
CellContent.props = ['cell', 'header']
