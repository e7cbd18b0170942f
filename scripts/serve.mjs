// `npm run serve`: serves the built app (dist/, or TALLYWOOD_OUT_DIR). Node built-ins only.
//
// Astro's Node adapter takes the client's address from X-Forwarded-For, and the scheme and host
// from X-Forwarded-Proto/-Host, whoever sends them. Here, before a request reaches Astro, those
// headers survive only when the request comes from a proxy listed in TRUSTED_PROXIES
// (scripts/lib/forwarded.mjs); from anyone else they are removed, so the address the app sees is
// the socket's own.
import { createServer } from 'node:http';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { parseTrustedProxies, trustedHeaders } from './lib/forwarded.mjs';

const root = resolve(import.meta.dirname, '..');
const outDir = resolve(root, process.env.TALLYWOOD_OUT_DIR ?? 'dist');
const host = process.env.HOST ?? '127.0.0.1';
const port = Number(process.env.PORT ?? 4321);
const trusted = parseTrustedProxies(process.env.TRUSTED_PROXIES);

// The adapter's own server must not start: this one serves its handler (static files and the app).
// Importing the entry runs the deployment check (src/server/startup.ts), which exits when something is missing.
process.env.ASTRO_NODE_AUTOSTART = 'disabled';
const { handler } = await import(pathToFileURL(join(outDir, 'server', 'entry.mjs')).href);

const server = createServer((req, res) => {
  trustedHeaders(req.headers, req.socket.remoteAddress, trusted);
  handler(req, res);
});

/**
 * Lingering close (RFC 9112 §9.6). A refused upload (413, 415) is answered before its body has
 * arrived, on a connection that then closes. Closing the socket while the client is still sending
 * makes the kernel reset the connection, and the reset can erase the answer before the client reads
 * it. So a closing connection sends its answer and its FIN, then reads and drops whatever still
 * comes, until the client closes its side or for at most two seconds.
 */
const lingerMs = 2000;
server.on('connection', (socket) => {
  socket.destroySoon = function lingeringClose() {
    if (this.writable) this.end();
    this.resume();
    const timer = setTimeout(() => this.destroy(), lingerMs).unref();
    this.once('close', () => clearTimeout(timer));
    this.once('end', () => (this.writableFinished ? this.destroy() : this.once('finish', () => this.destroy())));
  };
});
server.listen(port, host, () => {
  const proxies = trusted.size > 0 ? `forwarded headers only from ${[...trusted].join(', ')}` : 'no forwarded headers';
  console.log(`Tallywood is serving http://${host}:${port} (trusting ${proxies})`);
});
// On SIGINT or SIGTERM: stop taking requests and jobs, let a job being run finish
// (src/server/startup.ts leaves the function that stops the queue), then exit. A second signal exits at once.
let stopping = false;
for (const signal of ['SIGINT', 'SIGTERM']) {
  process.on(signal, async () => {
    if (stopping) process.exit(1);
    stopping = true;
    const closed = new Promise((done) => server.close(done));
    server.closeAllConnections();
    const stopJobs = globalThis[Symbol.for('tallywood.shutdown')];
    try {
      await Promise.all([closed, typeof stopJobs === 'function' ? stopJobs() : undefined]);
    } catch (error) {
      console.error('the job queue did not stop cleanly:', error instanceof Error ? error.message : error);
    }
    process.exit(0);
  });
}
