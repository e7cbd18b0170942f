import { sql } from 'drizzle-orm';

/**
 * Ids as one `uuid[]` parameter (`= any(…)`), not one parameter each: a statement takes at most
 * 65 535 parameters (the protocol's Int16 count), and a club may hold permits on more parcels than that.
 */
export const uuidArray = (ids: readonly string[]) => sql`${`{${ids.join(',')}}`}::uuid[]`;
