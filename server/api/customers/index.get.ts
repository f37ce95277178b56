import { listCustomers } from '../../database/repositories/customers'

export default defineEventHandler(async () => ({ customers: await listCustomers(useDb()) }))
