import { clientsClaim } from 'workbox-core';
import { cleanupOutdatedCaches, precacheAndRoute, type PrecacheEntry } from 'workbox-precaching';
import { registerRoute } from 'workbox-routing';
import { CacheFirst, NetworkFirst } from 'workbox-strategies';
import { ExpirationPlugin } from 'workbox-expiration';
import { CacheableResponsePlugin } from 'workbox-cacheable-response';
import { fieldSentMessage } from './components/field/offline-store';
import { backgroundSyncTag, sendAllWaiting } from './components/field/sync';

/**
 * Tallywood's service worker, built by vite-plugin-pwa (injectManifest) with Workbox's modules.
 *
 * - The built scripts, styles, fonts and icons are precached.
 * - The pages opened in the field (Field, My permits, My ledger, each permit card, and the warden's
 *   Check a permit card) are kept from their last visit and served from there only when the network does not answer. The
 *   check page is also fetched when the worker installs, so it opens with no signal even before a
 *   first visit of its own.
 * - Map tiles are kept as they are loaded (the Field's "Get ready" loads the pack's).
 * - Everything else, and every API call, always goes to the network.
 * - Background Sync: when the browser has a connection again, even with Tallywood closed, the check-ins
 *   and entries waiting on the device (IndexedDB, src/components/field/offline-store.ts) are sent by the
 *   same code the page uses, and the open pages are told to show their new states.
 */

/** The parts of the worker's global scope used here (the DOM's types are the project's; the worker's are not loaded beside them). */
type WorkerScope = {
  __WB_MANIFEST: (string | PrecacheEntry)[];
  skipWaiting(): Promise<void>;
  addEventListener(type: 'sync', listener: (event: SyncEvent) => void): void;
  addEventListener(type: 'install', listener: (event: Event & { waitUntil(work: Promise<unknown>): void }) => void): void;
  clients: { matchAll(options: { type: 'window' }): Promise<{ postMessage(message: unknown): void }[]> };
};
type SyncEvent = Event & { tag: string; lastChance: boolean; waitUntil(work: Promise<unknown>): void };

declare const self: WorkerScope;

/** A new worker takes over at once: the app has no state in the old one to finish with. */
void self.skipWaiting();
clientsClaim();

precacheAndRoute(self.__WB_MANIFEST);
cleanupOutdatedCaches();

const keptPages = ['/field', '/my-permits', '/ledger', '/verify'];
/** A permit card (/permits/<id>/card): shown to a warden where there may be no signal. */
const cardPage = /^\/permits\/[0-9a-f-]{36}\/card$/;
const pagesCache = 'tallywood-pages';

registerRoute(
  ({ request, url }) => request.mode === 'navigate' && (keptPages.includes(url.pathname) || cardPage.test(url.pathname)),
  new NetworkFirst({ cacheName: pagesCache, networkTimeoutSeconds: 6, plugins: [new CacheableResponsePlugin({ statuses: [200] })] }),
);

/** The check page, kept at install; a failure (no signal) leaves it to be kept on its first visit. */
self.addEventListener('install', (event) => {
  event.waitUntil(
    caches
      .open(pagesCache)
      .then(async (cache) => {
        if (!(await cache.match('/verify'))) await cache.add('/verify');
      })
      .catch(() => {}),
  );
});

registerRoute(
  ({ url }) => url.pathname.startsWith('/tiles/') || /\/\d+\/\d+\/\d+\.(png|jpg|jpeg|webp|pbf)$/.test(url.pathname),
  new CacheFirst({
    cacheName: 'tallywood-tiles',
    plugins: [new CacheableResponsePlugin({ statuses: [0, 200] }), new ExpirationPlugin({ maxEntries: 6000, maxAgeSeconds: 60 * 24 * 60 * 60 })],
  }),
);

self.addEventListener('sync', (event) => {
  if (event.tag !== backgroundSyncTag) return;
  event.waitUntil(
    (async () => {
      const outcomes = await sendAllWaiting();
      for (const client of await self.clients.matchAll({ type: 'window' })) client.postMessage({ type: fieldSentMessage });
      // With no connection yet the browser tries again later (and once more as its last chance);
      // a refusal (signed out, another account) waits for the person, so it is not retried here.
      if (outcomes.some((o) => o.offline)) throw new Error('No connection yet; the browser tries the sync again later.');
    })(),
  );
});
