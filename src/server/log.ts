import pino from 'pino';

/**
 * The server's log: one JSON object a line on standard output (pino), for a log collector to read.
 * Every request gets a line with its id, method, route pattern, status and time taken
 * (src/middleware.ts); a failure is logged with the id of the request it happened in.
 *
 * No personal data and no positions: lines name routes by their pattern (`/api/parcels/[id]`), never
 * the address asked for with its query, and never e-mail addresses, names, bodies or coordinates.
 * Errors keep their message and stack, which our own code writes without those.
 * LOG_LEVEL sets the least level written (default `info`; `silent` writes nothing). It is declared in
 * astro.config.mjs (env.schema) with the levels it may take, and read here from process.env because this
 * module is loaded outside Astro too (vitest imports endpoints and jobs); pino refuses an unknown level,
 * so a server given one stops at start with that error.
 */
export const log = pino({
  level: process.env.LOG_LEVEL || 'info',
  base: { service: 'tallywood' },
  timestamp: pino.stdTimeFunctions.isoTime,
  serializers: { err: pino.stdSerializers.err },
});

export type Log = typeof log;
