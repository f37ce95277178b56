export function linksOf(text: string, html: string): string[]
export function startMailFake(o?: { port?: number; dir: string; host?: string }): Promise<{ port: number; dir: string; close: () => Promise<void> }>
