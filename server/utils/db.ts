// Nitro auto-imports from server/utils: the database for route handlers.
export { useDb } from '../db/client'
export * as tables from '../db/schema'
