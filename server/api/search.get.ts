import { search } from '../services/search'
import { parseSearchQuery } from '../utils/search-query'

export default defineEventHandler((event) => search(useDb(), parseSearchQuery(getQuery(event))))
