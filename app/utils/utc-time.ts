// Times on screen are UTC, as the stations log them; a dash stands for none.
const DASH = '—'

const stamp = (value: string | Date | null | undefined, length: number) => (value ? new Date(value).toISOString().slice(0, length).replace('T', ' ') : DASH)

/** "YYYY-MM-DD" */
export const utcDate = (value: string | Date | null | undefined): string => stamp(value, 10)
/** "YYYY-MM-DD HH:MM" */
export const utcMinute = (value: string | Date | null | undefined): string => stamp(value, 16)
/** "YYYY-MM-DD HH:MM:SS" */
export const utcSeconds = (value: string | Date | null | undefined): string => stamp(value, 19)
