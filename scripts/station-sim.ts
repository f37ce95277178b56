// A pretend test station: posts realistic runs of every step of a part for N units into one lot.
import { USAGE, UsageError, parseSimArgs, summaryLine } from './lib/station-sim-core'
import { simulateStation } from './lib/station-sim-run'

async function main() {
  const args = parseSimArgs(process.argv.slice(2), Date.now() >>> 0)
  const { tally } = await simulateStation(args)
  process.stdout.write(summaryLine(tally) + '\n')
  process.exitCode = tally.failures.size ? 1 : 0
}

main().catch((e) => {
  if (e instanceof UsageError) process.stderr.write(`station-sim: ${e.message}\n${USAGE}\n`)
  else process.stderr.write(`station-sim: ${e?.message ?? e}\n`)
  process.exit(2)
})
