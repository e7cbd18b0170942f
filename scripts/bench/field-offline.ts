import { readFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { build } from 'esbuild';
import type { Sql } from 'postgres';
import { chromium } from '@playwright/test';
import { closeDb, createDb } from '../../src/db/client';
import { loadParcelFactsNear } from '../../src/db/field.queries';
import type { FieldPack } from '../../src/lib/field/pack';
import { root } from '../lib/setup.mjs';

/**
 * The Field as a phone gets it (issue 12's performance targets): the JavaScript the Field page loads,
 * gzipped as a server would send it; the size of a field pack of `parcels` bench parcels; and the
 * time the engine takes to decide an offline check-in on that pack in Chromium with its CPU slowed
 * four times (the DevTools protocol's Emulation.setCPUThrottlingRate), as on a modest phone.
 */
export type FieldOfflineFigures = {
  page: { scripts: number; bytes: number; gzipBytes: number; files: { path: string; gzipBytes: number }[] };
  pack: { parcels: number; bytes: number; gzipBytes: number };
  verdict: { positions: number; throttle: number; p50Ms: number; p95Ms: number; maxMs: number; verdicts: Record<string, number> };
};

const chromiumPath = '/usr/bin/chromium';

/**
 * The engine's offline check-in and a timing loop over it as one browser script, bundled by esbuild
 * from src/lib/field/pack.ts: `globalThis.timeOffline(packJson, box, positions, at)` decides
 * `positions` seeded random positions in the box and answers each one's milliseconds and verdict.
 */
async function engineScript(): Promise<string> {
  const contents = `
    import { offlineCheckIn } from './src/lib/field/pack';
    globalThis.timeOffline = (packJson, box, positions, at) => {
      const pack = JSON.parse(packJson);
      let seed = 12;
      const random = () => ((seed = (seed * 16807) % 2147483647) - 1) / 2147483646;
      const samples = [];
      const verdicts = {};
      for (let i = 0; i < positions; i += 1) {
        const position = [box.west + random() * (box.east - box.west), box.south + random() * (box.north - box.south)];
        const t0 = performance.now();
        const answer = offlineCheckIn(pack, { position, accuracyM: 5 + random() * 25, at: new Date(at), counted: [] });
        samples.push(performance.now() - t0);
        verdicts[answer.verdict] = (verdicts[answer.verdict] ?? 0) + 1;
      }
      return { samples, verdicts };
    };`;
  const out = await build({
    stdin: { contents, resolveDir: root, loader: 'ts' },
    bundle: true, format: 'iife', platform: 'browser', target: 'es2022', write: false, minify: true, logLevel: 'silent',
  });
  return out.outputFiles[0]?.text ?? '';
}

export async function measureFieldOffline(
  sql: Sql,
  { databaseUrl, baseUrl, clientDir, sessionToken, centre, parcels = 500, positions = 300 }: {
    databaseUrl: string; baseUrl: string; clientDir: string; sessionToken: string; centre: [number, number]; parcels?: number; positions?: number;
  },
): Promise<FieldOfflineFigures> {
  // The pack: the facts of the `parcels` bench parcels nearest the centre, as a bench member sees them.
  const [member] = await sql<{ id: string; clubs: string[] }[]>`
    select u.id, array(select m.club_id::text from club_memberships m where m.user_id = u.id and m.state = 'active') as clubs
    from sessions s join users u on u.id = s.user_id where s.session_token = ${sessionToken}`;
  if (!member) throw new Error('the bench session has no user');
  const forager = { id: member.id, clubIds: member.clubs };
  const db = createDb(databaseUrl, { max: 1 });
  let facts;
  try {
    let radiusM = 2000;
    facts = await loadParcelFactsNear(db, { longitude: centre[0], latitude: centre[1], radiusM, forager });
    while (facts.length < parcels && radiusM < 200_000) {
      radiusM *= 2;
      facts = await loadParcelFactsNear(db, { longitude: centre[0], latitude: centre[1], radiusM, forager });
    }
  } finally {
    await closeDb(db);
  }
  const chosen = facts.slice(0, parcels);
  const now = new Date();
  const pack: FieldPack = { format: 1, asOf: now.toISOString(), forager, parcels: chosen, usable: chosen.length, usage: {}, usageDay: {}, terms: {} };
  const packJson = JSON.stringify(pack);

  const browser = await chromium.launch({ executablePath: chromiumPath, args: ['--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-quic'] });
  try {
    // The Field page's scripts, as a signed-in member's browser loads them.
    const context = await browser.newContext({ baseURL: baseUrl, serviceWorkers: 'block' });
    await context.addCookies([{ name: 'authjs.session-token', value: sessionToken, url: baseUrl }]);
    const page = await context.newPage();
    const scripts = new Set<string>();
    page.on('request', (request) => {
      const url = new URL(request.url());
      if (request.resourceType() === 'script' && url.origin === new URL(baseUrl).origin) scripts.add(url.pathname);
    });
    await page.goto('/field');
    await page.locator('[data-hydrated]').first().waitFor({ timeout: 30_000 });
    await page.waitForLoadState('networkidle');
    const files = [...scripts].map((path) => {
      const file = join(clientDir, path);
      const bytes = existsSync(file) ? readFileSync(file) : Buffer.alloc(0);
      return { path, bytes: bytes.length, gzipBytes: gzipSync(bytes, { level: 9 }).length };
    });

    // The offline verdict: random positions over the pack's area, each decided by the bundled engine.
    const lons = chosen.flatMap((p) => p.boundary.coordinates.flatMap((polygon) => (polygon[0] ?? []).map((c) => c[0] as number)));
    const lats = chosen.flatMap((p) => p.boundary.coordinates.flatMap((polygon) => (polygon[0] ?? []).map((c) => c[1] as number)));
    const box = { west: Math.min(...lons), east: Math.max(...lons), south: Math.min(...lats), north: Math.max(...lats) };
    const engine = await page.context().newPage();
    await engine.setContent('<!doctype html><title>engine</title>');
    await engine.addScriptTag({ content: await engineScript() });
    const cdp = await context.newCDPSession(engine);
    const throttle = 4;
    await cdp.send('Emulation.setCPUThrottlingRate', { rate: throttle });
    type Timing = { samples: number[]; verdicts: Record<string, number> };
    const timing = (await engine.evaluate(
      (args: [string, typeof box, number, string]) => (globalThis as unknown as { timeOffline: (...a: unknown[]) => Timing }).timeOffline(...args),
      [packJson, box, positions, now.toISOString()] as [string, typeof box, number, string],
    )) as Timing;
    const sorted = [...timing.samples].sort((a, b) => a - b);
    const at = (q: number) => sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))] ?? Number.NaN;
    return {
      page: { scripts: files.length, bytes: files.reduce((n, f) => n + f.bytes, 0), gzipBytes: files.reduce((n, f) => n + f.gzipBytes, 0), files: files.map(({ path, gzipBytes }) => ({ path, gzipBytes })) },
      pack: { parcels: chosen.length, bytes: Buffer.byteLength(packJson), gzipBytes: gzipSync(packJson, { level: 9 }).length },
      verdict: { positions, throttle, p50Ms: at(0.5), p95Ms: at(0.95), maxMs: sorted.at(-1) ?? Number.NaN, verdicts: timing.verdicts },
    };
  } finally {
    await browser.close();
  }
}
