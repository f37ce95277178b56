import { BaseSequencer, type TestSpecification } from 'vitest/node'

/**
 * Vitest's own order (failed and slow files first) with one change: files named `*.after-all.test.ts` run after
 * every other file of their project. The e2e project runs its files one at a time (fileParallelism: false), so such
 * a file sees everything the others made the test server do — the server log check depends on it. A file name
 * alone would not do: the default order is by past results and file size, not by name.
 */
export default class AfterAllSequencer extends BaseSequencer {
  override async sort(files: TestSpecification[]): Promise<TestSpecification[]> {
    const sorted = await super.sort(files)
    const last = (f: TestSpecification) => f.moduleId.endsWith('.after-all.test.ts')
    return [...sorted.filter((f) => !last(f)), ...sorted.filter(last)]
  }
}
