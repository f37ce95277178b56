/** One field's fault in a refused request: a JSON Pointer into the body (or /query/<name>) and what is wrong there. */
export type FieldError = { pointer: string; message: string }
