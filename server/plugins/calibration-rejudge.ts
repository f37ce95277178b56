import { drainRejudgeQueue } from '../services/calibration/rejudge'
import { repeatEvery } from '../utils/repeating-task'

// Runs whose write met a calibration history newer than their judgement are queued by that write; any process
// judges them again. The queue is almost always empty: one indexed read every two seconds.
export default defineNitroPlugin((nitro) => {
  repeatEvery(nitro, 2000, 'judging queued runs against calibration', () => drainRejudgeQueue(useDb()))
})
