import type { AlertFigure } from '../../../shared/types/alert'

/** A rule that fired about one subject, ready to be raised (unless throttled). */
export type Outcome = {
  subject: string; subjectLabel: string; summary: string; figures: AlertFigure[]; link: string
  /** the subject names one episode (a due date, a silence): raised once, however long it lasts */
  once?: boolean
  productId: number | null; lotId: number | null; stationId: number | null; instrumentId: number | null
  /** for calibration_due: what the owner's own message states */
  instrument?: { assetNumber: string; station: string; dueOn: string | null; daysLeft: number | null }
}
