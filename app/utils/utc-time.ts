// Times on screen are UTC, as the stations log them; a dash stands for none.
const DASH = '—'

const stamp = (value: string | Date | null | undefined, length: number) => (value ? new Date(value).toISOString().slice(0, length).replace('T', ' ') : DASH)

/** "YYYY-MM-DD" */
export const utcDate = (value: string | Date | null | undefined): string => stamp(value, 10)
/** "YYYY-MM-DD HH:MM" */
export const utcMinute = (value: string | Date | null | undefined): string => stamp(value, 16)
/** "YYYY-MM-DD HH:MM:SS" */
export const utcSeconds = (value: string | Date | null | undefined): string => stamp(value, 19)

/** A datetime-local field read as UTC (the pages label such fields UTC): "YYYY-MM-DDTHH:MM" → ISO 8601 with Z. */
export const utcFieldToIso = (value: string): string => new Date(`${value.length === 16 ? `${value}:00` : value}Z`).toISOString()

/** The same field's value for an instant: "YYYY-MM-DDTHH:MM" in UTC. */
export const isoToUtcField = (value: string | Date): string => new Date(value).toISOString().slice(0, 16)
