// `npm run bench`: installs what is missing (as `npm start` and `npm test` do: the dependencies, and
// Debian's wrk for the HTTP load; pgbench comes with PostgreSQL), then runs the benchmark in
// scripts/bench.ts with tsx. Node built-ins only: this runs before any dependency is installed.
import { spawnSync } from 'node:child_process';
import { bin, ensureDependencies, ensureWrk, root } from './lib/setup.mjs';

ensureDependencies();
ensureWrk();
// Ctrl-C reaches the benchmark too; this process waits for it to stop its server and cluster.
process.on('SIGINT', () => {});
const result = spawnSync(bin('tsx'), ['scripts/bench.ts', ...process.argv.slice(2)], { cwd: root, stdio: 'inherit' });
process.exit(result.status ?? 1);
