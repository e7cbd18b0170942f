import { fileURLToPath } from 'node:url';
import { gzipSync } from 'node:zlib';
import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readDemo, seedDemoIfEmpty } from '../../src/db/demo/seed-demo';
import { loadParcelFactsAround, loadParcelFactsNear } from '../../src/db/field.queries';
import { applyMigrations } from '../../src/db/migrations';
import type { CheckInAnswer, Forager, LonLat } from '../../src/lib/field/types';
import { offlineCheckIn, type FieldPack } from '../../src/lib/field/pack';
import { decideAt } from '../../src/server/field/check-in';
import { fieldPack } from '../../src/server/field/pack';
import { createThrowawayDatabase, migrationsFolder, type ThrowawayDatabase } from './throwaway-database';
import { mulberry32 } from '../seeded-random';

/*
 * The field pack against the server, on the demo valley (data/demo) loaded into a throwaway
 * database. The demo is loaded as of noon on the day it is written as of (scenario.json
 * `writtenAsOf`, 2026-12-01; America/New_York keeps EST, UTC−5, in December: IANA tz data,
 * REFERENCES §6), through the loader's own `now`, so no demo date moves and nothing here depends on
 * the day the test runs. The pack is made, and every check-in decided, at that same instant: Owen's
 * permit on Cobble Ridge Lot runs 2026-04-01…2027-03-31, its next closure starts 2026-12-05, and
 * chaga (11-01…03-15) and paper birch (all year) are in season there (scenario.json).
 */
const dataDir = fileURLToPath(new URL('../../data', import.meta.url));
const demo = readDemo(dataDir);
const now = new Date(`${demo.scenario.writtenAsOf}T17:00:00Z`);
const seed = 20_261_201; // mulberry32 seeded with the demo's "today", 2026-12-01

let throwaway: ThrowawayDatabase | undefined;
const db = () => {
  if (!throwaway) throw new Error('the throwaway database was not created');
  return throwaway.db;
};


/** A person of the demo as the app sees them: their id and the clubs they are an active member of (src/db/accounts.queries.ts). */
async function foragerByEmail(email: string): Promise<Forager> {
  const [row] = await db().execute<{ id: string; clubs: string[] }>(sql`
    select u.id, array(select m.club_id::text from club_memberships m where m.user_id = u.id and m.state = 'active') as clubs
    from users u where u.email = ${email}`);
  if (!row) throw new Error(`the demo has no ${email}`);
  return { id: row.id, clubIds: row.clubs };
}

/**
 * The check-in the server decides (src/server/field/check-in.ts `decideAt`, which `checkIn` records),
 * and the parcels it decided among: those near the position, and when it is outside them all, those
 * whose bounding box holds it.
 */
async function serverAnswer(forager: Forager, position: LonLat, accuracyM: number): Promise<{ answer: CheckInAnswer; candidates: string[] }> {
  const near = { longitude: position[0], latitude: position[1], forager };
  const answer = await decideAt(db(), { forager, position, accuracyM, now });
  const parcels = [...(await loadParcelFactsNear(db(), { ...near, radiusM: Math.max(accuracyM, 1) })), ...(answer.verdict === 'outside' ? await loadParcelFactsAround(db(), near) : [])];
  return { answer, candidates: parcels.map((p) => p.id) };
}

/** What the two answers must share: the verdict, parcel, permit, hazards and species with their tallies; the reasons apart. */
const decision = (a: CheckInAnswer) => ({ verdict: a.verdict, parcelId: a.parcel?.id ?? null, permitId: a.permitId, hazards: a.hazards, species: a.species });

type Compared = { position: LonLat; accuracyM: number; server: CheckInAnswer; offline: CheckInAnswer };
type Agreement = { compared: Compared[]; excluded: number; generated: number; ms: number };

/**
 * Positions in the box of the pack's parcels grown by about 200 m, with accuracies from 3 to 60 m,
 * until `wanted` of them have every server candidate in the pack. Decided in batches, at once on
 * the throwaway database's pool.
 */
async function agreement(forager: Forager, pack: FieldPack, wanted: number): Promise<Agreement> {
  const random = mulberry32(seed);
  const all = pack.parcels.flatMap((p) => p.boundary.coordinates.flat(2));
  const [lons, lats] = [all.map((p) => p[0] as number), all.map((p) => p[1] as number)];
  const midLat = (Math.min(...lats) + Math.max(...lats)) / 2;
  const degLat = 1 / 111_132; // degrees per metre, roughly: the margin only needs to be about 200 m
  const degLon = degLat / Math.cos((midLat * Math.PI) / 180);
  const [west, south] = [Math.min(...lons) - 200 * degLon, Math.min(...lats) - 200 * degLat];
  const [width, height] = [Math.max(...lons) + 200 * degLon - west, Math.max(...lats) + 200 * degLat - south];
  const inPack = new Set(pack.parcels.map((p) => p.id));
  const compared: Compared[] = [];
  let [excluded, generated] = [0, 0];
  const started = performance.now();
  while (compared.length < wanted && generated < 4 * wanted) {
    const batch = Array.from({ length: 200 }, () => ({ position: [west + random() * width, south + random() * height] as LonLat, accuracyM: 3 + random() * 57 }));
    generated += batch.length;
    const answers = await Promise.all(batch.map(({ position, accuracyM }) => serverAnswer(forager, position, accuracyM)));
    batch.forEach(({ position, accuracyM }, i) => {
      const { answer: server, candidates } = answers[i] as { answer: CheckInAnswer; candidates: string[] };
      // A parcel the forager may know of but not use (open to requests, their own) is left out of the pack by design.
      if (!candidates.every((id) => inPack.has(id))) {
        excluded += 1;
        return;
      }
      const { caveats: _, ...offline } = offlineCheckIn(pack, { position, accuracyM, at: now, counted: [] });
      compared.push({ position, accuracyM, server, offline });
    });
  }
  return { compared, excluded, generated, ms: performance.now() - started };
}

/** A few disagreements, with the position, for the failure message and the log. */
function disagreements(run: Agreement, differ: (c: Compared) => boolean) {
  const found = run.compared.filter(differ);
  const kindOf = (c: Compared) => `${c.server.verdict}: server "${c.server.reasons[0]?.slice(0, 24)}… ${c.server.reasons[1]?.slice(0, 18)}…", pack "${c.offline.reasons[0]?.slice(0, 24)}… ${c.offline.reasons[1]?.slice(0, 18)}…"`;
  // The first position of each way they differ, at most three.
  const examples = [...new Map(found.map((c) => [kindOf(c), c] as const).reverse()).values()].reverse().slice(0, 3);
  const first = examples.map((c) => ({
    position: c.position, accuracyM: c.accuracyM,
    server: { verdict: c.server.verdict, parcel: c.server.parcel?.name ?? null, reasons: c.server.reasons },
    offline: { verdict: c.offline.verdict, parcel: c.offline.parcel?.name ?? null, reasons: c.offline.reasons },
  }));
  if (found.length > 0) {
    // How they differ, by the sentences each side gave, so a systematic difference reads as one line.
    const kinds = found.reduce<Record<string, number>>((n, c) => ({ ...n, [kindOf(c)]: (n[kindOf(c)] ?? 0) + 1 }), {});
    console.log(`${found.length} of ${run.compared.length} positions disagree:`, JSON.stringify(kinds, null, 1), '\nthe first of each kind:', JSON.stringify(first, null, 1));
  }
  return { count: found.length, first };
}

const byVerdict = (run: Agreement) => run.compared.reduce<Record<string, number>>((n, c) => ({ ...n, [c.server.verdict]: (n[c.server.verdict] ?? 0) + 1 }), {});

beforeAll(async () => {
  throwaway = await createThrowawayDatabase('tallywood_field_pack');
  await applyMigrations(throwaway.db, migrationsFolder);
  expect(await seedDemoIfEmpty(throwaway.db, demo, { now })).toBe(true);
});

afterAll(async () => {
  await throwaway?.drop();
});

/*
 * Who holds what (data/demo/scenario.json permits, clubs.json):
 *   Owen Marsh (forager@example.org), in no club: active on Cobble Ridge Lot; expired on Farrand Woodlots.
 *   June Farrand: active on Pelletier Hill Farm (the parcel with a hole); she owns Farrand Sugarbush and Farrand Woodlots.
 *   Beth Lindqvist, member of Three Ridges: approved on Alder Bottom (from 2027-04-15); the club is active on
 *     Farrand Sugarbush and has only a request on Cobble Ridge Lot.
 */
const holders = [
  { email: 'forager@example.org', parcels: ['Cobble Ridge Lot'] },
  { email: 'june.farrand@example.org', parcels: ['Pelletier Hill Farm'] },
  { email: 'beth.lindqvist@example.org', parcels: ['Alder Bottom', 'Farrand Sugarbush'] },
];

describe('fieldPack on the demo: which parcels', () => {
  it.each(holders)('given $email, it holds exactly the listed parcels under an approved or active permit of theirs or their club’s: $parcels', async ({ email, parcels }) => {
    const forager = await foragerByEmail(email);
    const pack = await fieldPack(db(), { forager, now });
    const expected = await db().execute<{ id: string; name: string }>(sql`
      select distinct p.id::text as id, p.name from parcels p join permits pm on pm.parcel_id = p.id
      where p.status = 'listed' and pm.state in ('approved', 'active')
        and (pm.holder_user_id = ${forager.id} or pm.holder_club_id::text = any(${`{${forager.clubIds.join(',')}}`}::text[]))`);
    expect(pack.parcels.map((p) => p.id).sort()).toEqual(expected.map((r) => r.id).sort());
    expect(pack.parcels.map((p) => p.name).sort()).toEqual(parcels);
    expect(pack).toMatchObject({ format: 1, asOf: now.toISOString(), forager });
    expect(Object.keys(pack.usage).sort()).toEqual(expected.map((r) => r.id).sort());
    expect(Object.values(pack.usageDay)).toEqual(pack.parcels.map(() => demo.scenario.writtenAsOf));
  });

  it('given Owen, every permit in his pack is his own or his club’s, and each parcel’s terms are its latest version', async () => {
    const forager = await foragerByEmail('forager@example.org');
    const pack = await fieldPack(db(), { forager, now });
    const holdersSeen = pack.parcels.flatMap((p) => p.permits.map((pm) => pm.holderUserId === forager.id || forager.clubIds.includes(pm.holderClubId ?? '')));
    expect(holdersSeen.length).toBeGreaterThan(0);
    expect(holdersSeen.every(Boolean)).toBe(true);
    const latest = await db().execute<{ parcel_id: string; version: number }>(sql`select parcel_id::text, max(version)::int as version from terms group by parcel_id`);
    for (const parcel of pack.parcels) expect(pack.terms[parcel.id]?.version).toBe(latest.find((t) => t.parcel_id === parcel.id)?.version);
  });

  it('given the parcels nobody holds a permit on for Owen, none is in his pack: not Farrand Woodlots (expired), nor the draft', async () => {
    const pack = await fieldPack(db(), { forager: await foragerByEmail('forager@example.org'), now });
    expect(pack.parcels.map((p) => p.name)).not.toContain('Farrand Woodlots');
    expect(pack.parcels.map((p) => p.name)).not.toContain('Hosmer Back Forty');
  });
});

describe('fieldPack on the demo: the same answers as the server', () => {
  const runs = new Map<string, Promise<Agreement & { pack: FieldPack }>>();
  /** One agreement run per forager, shared by the tests that read it. */
  const run = (email: string, wanted: number) => {
    let found = runs.get(email);
    if (!found) {
      found = (async () => {
        const forager = await foragerByEmail(email);
        const pack = await fieldPack(db(), { forager, now });
        const result = await agreement(forager, pack, wanted);
        console.log(`${email}: ${result.generated} positions, ${result.compared.length} compared, ${result.excluded} left out (a candidate not in the pack), `
          + `${(result.ms / 1000).toFixed(1)} s; server verdicts ${JSON.stringify(byVerdict(result))}`);
        return { ...result, pack };
      })();
      runs.set(email, found);
    }
    return found;
  };
  const cases = [
    { email: 'forager@example.org', wanted: 10_000 },
    { email: 'june.farrand@example.org', wanted: 3_000 },
    { email: 'beth.lindqvist@example.org', wanted: 3_000 },
  ];

  it.each(cases)('given $email and $wanted random positions with every candidate in the pack, some positions are left out for a candidate outside it', async ({ email, wanted }) => {
    const result = await run(email, wanted);
    expect(result.compared.length).toBeGreaterThanOrEqual(wanted);
    expect(result.excluded).toBeGreaterThan(0);
  }, 600_000);

  it.each(cases)('given $email, the pack and the server give the same verdict, parcel, permit, hazards and species with tallies at every position', async ({ email, wanted }) => {
    const result = await run(email, wanted);
    expect(result.compared.length).toBeGreaterThanOrEqual(wanted);
    expect(disagreements(result, (c) => JSON.stringify(decision(c.server)) !== JSON.stringify(decision(c.offline)))).toEqual({ count: 0, first: [] });
  }, 600_000);

  it.each(cases)('given $email, the pack and the server give the same reasons at every position', async ({ email, wanted }) => {
    const result = await run(email, wanted);
    expect(result.compared.length).toBeGreaterThanOrEqual(wanted);
    expect(disagreements(result, (c) => JSON.stringify(c.server.reasons) !== JSON.stringify(c.offline.reasons))).toEqual({ count: 0, first: [] });
  }, 600_000);

  it('given Owen’s run, it met clear, closed (a zone), edge and outside answers, and tallies to compare', async () => {
    const counts = byVerdict(await run('forager@example.org', 10_000));
    for (const verdict of ['clear', 'closed', 'edge', 'outside']) expect(counts[verdict] ?? 0).toBeGreaterThan(0);
    const { compared } = await run('forager@example.org', 10_000);
    expect(compared.some((c) => c.server.species.some((s) => s.tallies.length > 0))).toBe(true);
  }, 600_000);
});

describe('fieldPack on the demo: its size', () => {
  it.each(holders)('given $email, the pack’s JSON is under 256 KiB, and under 32 KiB gzipped', async ({ email }) => {
    const pack = await fieldPack(db(), { forager: await foragerByEmail(email), now });
    const json = Buffer.from(JSON.stringify(pack));
    const gzipped = gzipSync(json);
    console.log(`${email}: pack of ${pack.parcels.length} parcel(s), ${json.length} bytes of JSON, ${gzipped.length} bytes gzipped`);
    expect(json.length).toBeLessThan(256 * 1024);
    expect(gzipped.length).toBeLessThan(32 * 1024);
  });
});
