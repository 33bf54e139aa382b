// Coordinate-system search.
import { z } from 'zod'

export const crsQuerySchema = z.object({ q: z.string().max(100).optional() })
