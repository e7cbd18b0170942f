import type { Sql } from 'postgres';
import { auditTallies } from '../../src/db/audit.queries';
import { closeDb, createDb } from '../../src/db/client';
import { seasonReport } from '../../src/db/reports.queries';
import { parcelName } from './parcels';

/** The bench parcels that carry the synthetic ledger: Bench parcel 0…199. */
export const entryParcelCount = 200;
/** The audit's and the reports' `asOf`: the last day entries are dated. */
export const auditAsOf = '2026-12-01';
/** Entry dates run from 2026-01-01 for this many days: day 334 is 2026-12-01. */
const entryDays = 335;
const batchSize = 50_000;
const benchClubSlug = 'bench-club';
const memberCount = 32;

/** A PostgreSQL array literal of text, sent as one parameter (as in seed.ts). */
const textArray = (values: readonly string[]) => `{${values.map((v) => `"${v.replace(/\\/g, '\\\\').replace(/"/g, '\\"')}"`).join(',')}}`;

export type EntrySeeding = { existing: number; seeded: number; ms: number; entries: number; limitsAdded: number; clubId: string; parcelId: string };

/**
 * Tops the synthetic ledger up to `target` entries, keyed 'bench-0'…'bench-<target−1>', on the first
 * 200 bench parcels under the bench club's permits, then ANALYZEs. Entry n lies on parcel n mod 200;
 * its round r = n div 200 picks the member ((7r + parcel) mod 32: every member on every parcel), the
 * day (7919r + 31·parcel mod 335: all of 2026-01-01…12-01, as 7919 mod 335 is prime to 335) and a
 * quantity of 5–120 g. Set-based, one statement per 50 000 entries (each entry and its quantity row;
 * the kept totals follow by trigger, as in the app); the ledger's append-only triggers fire on
 * UPDATE and DELETE only. Adds a 40 kg per-forager season limit and a 2000 kg
 * parcel-season limit to those parcels' allowances, so the audit has more than the day limit to tally.
 */
export async function seedEntries(sql: Sql, target = 1_000_000, log: (line: string) => void = () => {}): Promise<EntrySeeding> {
  const started = performance.now();
  const names = Array.from({ length: entryParcelCount }, (_, i) => parcelName(i));
  const [club] = await sql<{ id: string }[]>`select id from clubs where slug = ${benchClubSlug}`;
  if (!club) throw new Error('the bench club is missing: seed the bench parcels first');
  const parcels = await sql<{ k: number; parcel_id: string; species_id: string; allowance_id: string; permit_id: string }[]>`
    select t.k::int - 1 as k, p.id as parcel_id, a.species_id, a.id as allowance_id,
      (select pm.id from permits pm where pm.parcel_id = p.id and pm.holder_club_id = ${club.id}::uuid order by pm.starts_on limit 1) as permit_id
    from unnest(${textArray(names)}::text[]) with ordinality as t(name, k)
    join parcels p on p.name = t.name
    join allowances a on a.parcel_id = p.id
    join species s on s.id = a.species_id and s.slug = 'bench-chanterelle'
    order by k`;
  if (parcels.length !== entryParcelCount || parcels.some((p, i) => p.k !== i || !p.permit_id)) {
    throw new Error(`expected Bench parcel 0…${entryParcelCount - 1}, each with a bench-chanterelle allowance and a bench club permit; found ${parcels.length}`);
  }
  const firstParcel = parcels[0] as (typeof parcels)[number];
  const parcelIds = textArray(parcels.map((p) => p.parcel_id));
  const speciesIds = textArray(parcels.map((p) => p.species_id));
  const permitIds = textArray(parcels.map((p) => p.permit_id));
  const allowanceIds = textArray(parcels.map((p) => p.allowance_id));

  const added = await sql`
    insert into limits (allowance_id, scope, quantity, unit)
    select a.id, l.scope, l.quantity, 'kg'::unit
    from unnest(${allowanceIds}::uuid[]) as a(id)
    cross join (values ('season'::limit_scope, 40::numeric), ('parcel-season'::limit_scope, 2000::numeric)) as l(scope, quantity)
    on conflict (allowance_id, permit_id, scope, unit_measure(unit)) do nothing`;

  const [row] = await sql<{ n: number }[]>`select count(*)::int as n from harvest_entries where idempotency_key like 'bench-%'`;
  const existing = row?.n ?? 0;
  if (existing < target) {
    log(`seeding harvest entries ${existing}…${target - 1} on ${entryParcelCount} bench parcels in batches of ${batchSize}…`);
    for (let from = existing; from < target; from += batchSize) {
      const to = Math.min(target, from + batchSize) - 1;
      await sql`
        with w as (
          select w.k::int - 1 as k, w.parcel_id, w.species_id, w.permit_id
          from unnest(${parcelIds}::uuid[], ${speciesIds}::uuid[], ${permitIds}::uuid[]) with ordinality as w(parcel_id, species_id, permit_id, k)),
        n as (
          select n, (n % ${entryParcelCount})::int as k, (n / ${entryParcelCount}) as r, 5 + (n * 104729) % 116 as grams
          from generate_series(${from}::bigint, ${to}::bigint) as g(n)),
        inserted as (
          insert into harvest_entries (idempotency_key, forager_id, parcel_id, permit_id, club_id, visit_id, species_id, method,
            local_date, counted_on, counted_visit_id, season_start, season_end, breach, recorded_by, created_at)
          -- The bench allowances' one window, 01-01…12-31, holds every 2026 date in the 2026 occurrence.
          select 'bench-' || n.n, m.id, w.parcel_id, w.permit_id, ${club.id}::uuid, null, w.species_id, 'pick'::method,
            d.local_date, d.local_date, null, date '2026-01-01', date '2026-12-31', false, m.id, (d.local_date + time '12:00') at time zone 'UTC'
          from n
          join w using (k)
          cross join lateral (select 'bench-member-' || lpad(((7 * n.r + n.k) % ${memberCount})::text, 2, '0') as id) m
          cross join lateral (select date '2026-01-01' + ((7919 * n.r + 31 * n.k) % ${entryDays})::int as local_date) d
          on conflict (forager_id, idempotency_key) do nothing
          returning id, idempotency_key)
        insert into harvest_quantities (entry_id, measure, quantity, unit, base_quantity)
        select i.id, 'mass'::measure, n.grams, 'g'::unit, n.grams
        from inserted i join n on i.idempotency_key = 'bench-' || n.n`;
      if ((to + 1 - existing) % (batchSize * 4) === 0) log(`  ${to + 1} entries (${((performance.now() - started) / 1000).toFixed(1)} s)`);
    }
  }
  if (existing < target || added.count > 0) {
    await sql`analyze harvest_entries`;
    await sql`analyze limits`;
  }
  // After a bulk load, as autovacuum would in time: the visibility map lets the audit read the
  // kept totals from their index alone.
  await sql`vacuum analyze harvest_totals`;
  const [total] = await sql<{ n: number }[]>`select count(*)::int as n from harvest_entries where idempotency_key like 'bench-%'`;
  return { existing, seeded: Math.max(0, target - existing), ms: performance.now() - started, entries: total?.n ?? 0, limitsAdded: added.count, clubId: club.id, parcelId: firstParcel.parcel_id };
}

export type Timing = { runs: number; minMs: number; medianMs: number; maxMs: number };
export type Statement = { label: string; ms: number; rows: number };

export type AuditFigures = {
  asOf: string;
  entries: number;
  /** Parcels in the bench club's view (its permits are on every bench parcel), and those with entries. */
  clubParcels: number;
  entryParcels: number;
  /** Rows of the kept totals (harvest_totals) the entries were summed into. */
  totalsRows: number;
  audit: Timing & { rows: number; statements: Statement[] };
  clubReport: Timing & { species: number; entries: number; foragers: number };
  ownerReport: Timing & { species: number; entries: number; foragers: number; ownerId: string };
  /** EXPLAIN (ANALYZE, BUFFERS) of each of the audit's statements over the kept totals, run with the parameters the app sent. */
  plans: { plan: string; executionMs: number | null }[];
  indexesUsed: string[];
  /** Every statement over the kept totals grouped them in memory: no sort or hash spilled to disk. */
  inMemory: boolean;
};

/** A warm-up call, then up to `runs` timed calls, fewer once `maxMs` has passed since the warm-up began (at least one). */
async function time<T>(runs: number, maxMs: number, task: () => Promise<T>): Promise<Timing & { last: T }> {
  const started = performance.now();
  let last = await task(); // warm-up: caches, plans, the pool's connection
  const samples: number[] = [];
  while (samples.length < runs && (samples.length === 0 || performance.now() - started < maxMs)) {
    const t0 = performance.now();
    last = await task();
    samples.push(performance.now() - t0);
  }
  const sorted = [...samples].sort((a, b) => a - b);
  const middle = (sorted.length - 1) / 2;
  const medianMs = ((sorted[Math.floor(middle)] ?? Number.NaN) + (sorted[Math.ceil(middle)] ?? Number.NaN)) / 2;
  return { runs: samples.length, minMs: sorted[0] ?? Number.NaN, medianMs, maxMs: sorted.at(-1) ?? Number.NaN, last };
}

const indexesIn = (plan: string) => [...new Set([...plan.matchAll(/(?:Index Scan|Index Only Scan|Bitmap Index Scan) (?:Backward )?(?:using|on) (\w+)/g)].map((m) => m[1] as string))];

const labelOf = (text: string) =>
  /\bfrom harvest_totals where parcel_id = any\b/.test(text)
    ? 'kept totals of every season window (auditSumsQuery)'
    : /from parcels p\s+where/.test(text)
      ? 'parcels in view with allowances, limits, permits (loadAuditParcels)'
      : text.replace(/\s+/g, ' ').trim().slice(0, 60);

/**
 * The audit of the whole bench club and the season report of one parcel (the club's and the
 * landowner's), through the app's own query functions: a warm-up, then `runs` timed calls each
 * (fewer when a phase passes `maxMs`).
 * One more audit call goes through a wrapped postgres.js `unsafe` (which Drizzle's `execute` calls)
 * to time each statement and keep the text and parameters of those over the kept totals for EXPLAIN.
 * The kept totals are loaded into PostgreSQL's buffers first (pg_prewarm), as for the check-ins.
 */
export async function measureAudit(
  databaseUrl: string,
  { clubId, parcelId, runs = 5, maxMs = 60_000 }: { clubId: string; parcelId: string; runs?: number; maxMs?: number },
): Promise<AuditFigures> {
  const db = createDb(databaseUrl, { max: 2, hotMax: 1 });
  try {
    const client = db.$client;
    await client`select pg_prewarm(r::regclass) from unnest(array['harvest_totals', 'harvest_totals_key', 'harvested_parcels']) as t(r)`;
    const [facts] = await client<{ owner_id: string; club_parcels: number; entries: number; entry_parcels: number; totals_rows: number }[]>`
      select (select owner_id from parcels where id = ${parcelId}::uuid) as owner_id,
        (select count(*)::int from harvest_totals) as totals_rows,
        (select count(distinct parcel_id)::int from permits where holder_club_id = ${clubId}::uuid) as club_parcels,
        (select count(*)::int from harvest_entries where idempotency_key like 'bench-%') as entries,
        (select count(distinct parcel_id)::int from harvest_entries where idempotency_key like 'bench-%') as entry_parcels`;
    if (!facts?.owner_id) throw new Error(`parcel ${parcelId} not found`);
    const ownerId = facts.owner_id;

    const audit = await time(runs, maxMs, () => auditTallies(db, { clubId }, { asOf: auditAsOf }));
    const clubReport = await time(runs, maxMs, () => seasonReport(db, { clubId, parcelId }, { asOf: auditAsOf }));
    const ownerReport = await time(runs, maxMs, () => seasonReport(db, { ownerId, parcelId }, { asOf: auditAsOf }));
    const reportFigures = (r: Awaited<ReturnType<typeof seasonReport>>) => ({
      species: r?.species.length ?? 0,
      entries: r?.species.reduce((n, s) => n + s.entries, 0) ?? 0,
      foragers: r?.foragers ?? 0,
    });

    // One more audit, with every statement timed and kept, on the pool and inside any transaction
    // the audit opens (Drizzle's transaction runs its statements on postgres.js's `begin` handle).
    type Captured = { text: string; params: unknown[]; ms: number; rows: number; setup: string[] };
    const captured: Captured[] = [];
    const wrap = (target: typeof client, setup: string[] | null) => {
      const original = target.unsafe;
      target.unsafe = ((text: string, params?: unknown[], options?: object) => {
        const query = original.call(target, text, params as never, options);
        const entry = { text, params: params ?? [], ms: Number.NaN, rows: 0, setup: setup ? [...setup] : [] };
        captured.push(entry);
        if (setup && /^\s*set local\b/i.test(text)) setup.push(text);
        const t0 = performance.now();
        // A postgres.js query starts when first awaited; Drizzle awaits this same promise next.
        query.then(
          (result) => {
            entry.ms = performance.now() - t0;
            entry.rows = result.length;
          },
          () => {},
        );
        return query;
      }) as typeof client.unsafe;
      return () => {
        target.unsafe = original;
      };
    };
    const unwrap = wrap(client, null);
    const begin = client.begin;
    client.begin = ((...args: unknown[]) => {
      const body = args.at(-1) as (tx: typeof client) => unknown;
      args[args.length - 1] = (tx: typeof client) => {
        wrap(tx, []);
        return body(tx);
      };
      return (begin as (...a: unknown[]) => unknown).apply(client, args);
    }) as typeof client.begin;
    try {
      await auditTallies(db, { clubId }, { asOf: auditAsOf });
    } finally {
      unwrap();
      client.begin = begin;
    }
    const sums = captured.filter((c) => /\bfrom harvest_totals where parcel_id = any\b/.test(c.text));
    if (sums.length === 0) throw new Error('the audit ran no statement over harvest_totals');
    const plans = [];
    for (const statement of sums) {
      // Explained with the same transaction-local settings the audit ran it with.
      const rows = await client.begin(async (tx) => {
        for (const setting of statement.setup) await tx.unsafe(setting);
        return tx.unsafe(`explain (analyze, buffers, costs off) ${statement.text}`, statement.params as never[]);
      });
      const plan = (rows as unknown as Record<string, unknown>[]).map((r) => String(r['QUERY PLAN'])).join('\n');
      const execution = /Execution Time: ([\d.]+) ms/.exec(plan);
      plans.push({ plan, executionMs: execution ? Number(execution[1]) : null });
    }
    const indexesUsed = [...new Set(plans.flatMap((p) => indexesIn(p.plan)))];

    return {
      asOf: auditAsOf,
      entries: facts.entries,
      clubParcels: facts.club_parcels,
      entryParcels: facts.entry_parcels,
      totalsRows: facts.totals_rows,
      audit: { runs: audit.runs, minMs: audit.minMs, medianMs: audit.medianMs, maxMs: audit.maxMs, rows: audit.last.rows.length, statements: captured.map((c) => ({ label: labelOf(c.text), ms: c.ms, rows: c.rows })) },
      clubReport: { runs: clubReport.runs, minMs: clubReport.minMs, medianMs: clubReport.medianMs, maxMs: clubReport.maxMs, ...reportFigures(clubReport.last) },
      ownerReport: { runs: ownerReport.runs, minMs: ownerReport.minMs, medianMs: ownerReport.medianMs, maxMs: ownerReport.maxMs, ...reportFigures(ownerReport.last), ownerId },
      plans,
      indexesUsed,
      inMemory: plans.every((p) => !/\btemp (?:read|written)=|\bDisk: /.test(p.plan)),
    };
  } finally {
    await closeDb(db);
  }
}
