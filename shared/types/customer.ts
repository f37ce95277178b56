export type CustomerContact = { id: number; name: string; email: string; phone: string | null; function: string | null; receivesCertificates: boolean }

export type CustomerSummary = { id: number; code: string; name: string; active: boolean; contacts: number; users: number }

export type CustomerDetail = { id: number; code: string; name: string; active: boolean; createdAt: string; updatedAt: string; contacts: CustomerContact[] }
