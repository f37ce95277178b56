import { productsWithRevision } from '../../services/products'

export default defineEventHandler(async () => ({ products: await productsWithRevision(useDb()) }))
