// `npm run serve`: serves the built app (dist/, or TALLYWOOD_OUT_DIR). Node built-ins only.
//
// Astro's Node adapter takes the client's address from X-Forwarded-For, and the scheme and host
// from X-Forwarded-Proto/-Host, whoever sends them. Here, before a request reaches Astro, those
// headers survive only when the request comes from a proxy listed in TRUSTED_PROXIES
// (scripts/lib/forwarded.mjs); from anyone else they are removed, so the address the app sees is
// the socket's own.
//
// TALLYWOOD_PROCESSES app processes serve one port (node:cluster; the default is one per core). With
// more than one, this process only starts them, forwards SIGINT/SIGTERM and replaces one that dies;
// each runs the app and its job queue, which runs each job once across them (src/server/jobs/queue.ts).
import cluster from 'node:cluster';
import { createServer } from 'node:http';
import { availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { parseTrustedProxies, trustedHeaders } from './lib/forwarded.mjs';
import { parseProcesses } from './lib/processes.mjs';

const host = process.env.HOST ?? '127.0.0.1';
const port = Number(process.env.PORT ?? 4321);
const trusted = parseTrustedProxies(process.env.TRUSTED_PROXIES);
const described = () => (trusted.size > 0 ? `forwarded headers only from ${[...trusted].join(', ')}` : 'no forwarded headers');

if (cluster.isPrimary) {
  const processes = parseProcesses(process.env.TALLYWOOD_PROCESSES, availableParallelism());
  if (typeof processes === 'string') {
    console.error(`Tallywood will not start until this is set:\n  - ${processes}`);
    process.exit(1);
  }
  if (processes === 1) await serveApp({ announce: true });
  else superviseWorkers(processes);
} else {
  await serveApp({ announce: false });
}

/** Runs the app in this process: its handler on a server of its own (or, in a worker, the cluster's shared port). */
async function serveApp({ announce }) {
  const root = resolve(import.meta.dirname, '..');
  const outDir = resolve(root, process.env.TALLYWOOD_OUT_DIR ?? 'dist');

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
    if (announce) console.log(`Tallywood is serving http://${host}:${port} (trusting ${described()})`);
  });

  // On SIGINT or SIGTERM (or, in a worker, the primary's word): stop taking requests and
  // jobs, let a job being run finish (src/server/startup.ts leaves the function that stops the queue),
  // then exit. The same signal a second time exits at once: a terminal's Ctrl-C reaches every process
  // of the group as SIGINT while `npm start` passes on SIGTERM, and that is one request to stop.
  let stopping = false;
  async function stop() {
    if (stopping) return;
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
  }
  const received = new Set();
  for (const signal of ['SIGINT', 'SIGTERM']) {
    process.on(signal, () => {
      if (received.has(signal)) process.exit(1);
      received.add(signal);
      void stop();
    });
  }
  if (cluster.isWorker) {
    // A terminal's Ctrl-C reaches every process of the group and the primary passes it on too: the
    // primary's word is a request to stop, not a second signal.
    process.on('message', (message) => message === stopMessage && void stop());
    // Closing the server tells the primary; a primary already gone (killed) makes that an EPIPE on the
    // worker's channel, which would otherwise crash this process mid-stop. Node ends a worker whose
    // primary is gone anyway, so the error is only logged.
    cluster.worker?.on('error', (error) => console.error('lost the primary process while stopping:', error.message));
  }
}

const stopMessage = 'tallywood:stop';

/**
 * The primary: forks `count` workers on one port, says it serves once all listen, replaces a worker
 * that dies (after a pause that doubles while they keep dying, up to 30 s), and on SIGINT or SIGTERM
 * asks each to stop and exits when all have (the same signal again ends them all at once). A worker that exits before it first listens (the
 * deployment check refused the settings, say) stops the whole server with its code: a new one would
 * only fail the same way.
 */
function superviseWorkers(count) {
  let stopping = false;
  let exitCode = 0;
  let announced = false;
  let failures = 0;
  /** When each worker began to listen; one not here has not served yet. */
  const listening = new Map();
  const workers = () => Object.values(cluster.workers ?? {}).filter((worker) => worker !== undefined && !worker.isDead());

  const fork = () => {
    const worker = cluster.fork();
    worker.once('listening', () => {
      listening.set(worker, Date.now());
      if (!announced && workers().filter((w) => listening.has(w)).length === count) {
        announced = true;
        console.log(`Tallywood is serving http://${host}:${port} with ${count} processes (trusting ${described()})`);
      }
    });
  };

  cluster.on('exit', (worker, code, signal) => {
    const servedSince = listening.get(worker);
    listening.delete(worker);
    if (stopping) {
      if (workers().length === 0) process.exit(exitCode);
      return;
    }
    if (servedSince === undefined && !announced) {
      console.error(`a Tallywood process exited before it served (${signal ?? `code ${code}`}); stopping.`);
      stopAll(code || 1);
      return;
    }
    // One that served a minute or more had not been failing: the pause starts short again.
    failures = servedSince !== undefined && Date.now() - servedSince >= 60_000 ? 1 : failures + 1;
    const pauseMs = Math.min(30_000, 500 * 2 ** (failures - 1));
    console.error(`a Tallywood process (pid ${worker.process.pid}) exited (${signal ?? `code ${code}`}); starting another in ${pauseMs / 1000} s.`);
    setTimeout(() => !stopping && fork(), pauseMs);
  });

  /** Asks every worker to stop (one still starting gets SIGTERM), and exits with `code` when all have. */
  function stopAll(code) {
    stopping = true;
    exitCode = code;
    const left = workers();
    if (left.length === 0) process.exit(code);
    for (const worker of left) {
      if (listening.has(worker) && worker.isConnected()) worker.send(stopMessage);
      else worker.process.kill('SIGTERM');
    }
  }

  const received = new Set();
  for (const signal of ['SIGINT', 'SIGTERM']) {
    process.on(signal, () => {
      if (received.has(signal)) {
        // The same signal again: every worker ends at once, and so does this.
        for (const worker of workers()) worker.process.kill('SIGKILL');
        process.exit(1);
      }
      received.add(signal);
      if (!stopping) stopAll(0);
    });
  }
  for (let n = 0; n < count; n += 1) fork();
}
