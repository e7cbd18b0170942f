/// <reference types="astro/client" />
/// <reference types="vite-plugin-pwa/info" />

declare namespace App {
  interface Locals {
    /** The signed-in person, resolved once per request by src/middleware.ts; null when signed out. */
    actor: import('./lib/actor').Actor | null;
    /** This request's log (src/server/log.ts), carrying its request id. */
    log: import('./server/log').Log;
  }
}
