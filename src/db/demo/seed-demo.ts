import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { count, eq, sql } from 'drizzle-orm';
import type { z } from 'zod';
import type { Db, Tx } from '../client';
import { measureOf, toBase } from '../../lib/units';
import { countingFactsFor, type CountingFacts } from '../../lib/field/counting';
import { localDateAt } from '../../lib/field/time';
import type { AllowanceFacts } from '../../lib/field/types';
import {
  allowances, checkIns, closures, clubMemberships, clubs, harvestEntries, harvestQuantities, hazards, limits, noHarvestZones, parcels, payments, permitEvents, permits,
  species, speciesCautions, terms, users, visits,
} from '../schema';
import { daysBetween, shiftDemo } from './shift';
import type { GeoJsonGeometry } from '../schema/columns';
import { clubsFile, parcelsFile, person, scenarioFile, signUpsFile, speciesFile, zonesFile, type DemoPerson } from './demo.schemas';

/** Reads one data file through its schema, naming the file when it does not fit. */
function readData<S extends z.ZodType>(dataDir: string, file: string, schema: S, parse: (text: string) => unknown = JSON.parse): z.infer<S> {
  const result = schema.safeParse(parse(readFileSync(join(dataDir, file), 'utf8')));
  if (!result.success) throw new Error(`data/${file} does not fit its schema: ${result.error.message}`);
  return result.data;
}

/** people.csv: email,name,roles(;-separated),landowner_verified,listed_as. No field holds a comma. */
function parsePeople(text: string): unknown {
  const [, ...lines] = text.trim().split(/\r?\n/);
  return lines.map((line) => {
    const [email, name, roles, verified] = line.split(',').map((cell) => cell.trim());
    return { email, name, roles: roles?.split(';'), landownerVerified: verified === 'true' };
  });
}

export function readDemo(dataDir: string) {
  return {
    species: readData(dataDir, 'species.json', speciesFile),
    people: readData(dataDir, 'demo/people.csv', person.array(), parsePeople),
    signUps: readData(dataDir, 'demo/sign-ups.json', signUpsFile),
    clubs: readData(dataDir, 'demo/clubs.json', clubsFile),
    parcels: readData(dataDir, 'demo/parcels.geojson', parcelsFile),
    zones: readData(dataDir, 'demo/zones.geojson', zonesFile),
    scenario: readData(dataDir, 'demo/scenario.json', scenarioFile),
  };
}

export type Demo = ReturnType<typeof readDemo>;

function lookup<T>(map: Map<string, T>, key: string, what: string): T {
  const value = map.get(key);
  if (value === undefined) throw new Error(`the demo names ${what} "${key}", which it does not define`);
  return value;
}

const geodesicArea = (geometry: GeoJsonGeometry) =>
  sql<number>`ST_Area(ST_Multi(ST_SetSRID(ST_GeomFromGeoJSON(${JSON.stringify(geometry)}), 4326))::geography)`;

/**
 * The day the demo is loaded, on its parcels' own calendar: the scenario is moved from the day it is
 * written as of to this one, so it never goes stale (src/db/demo/shift.ts).
 */
export function demoToday(demo: Demo, now: Date): string {
  return localDateAt(now, demo.parcels.features[0]?.properties.timeZone ?? 'UTC');
}

/** Loads the demo scenario, moved to today, when the database has no accounts yet. Returns whether it loaded. */
export async function seedDemoIfEmpty(db: Db, demo: Demo, { now = new Date() }: { now?: Date } = {}): Promise<boolean> {
  const [existing] = await db.select({ n: count() }).from(users);
  if ((existing?.n ?? 0) > 0) return false;
  const moved = shiftDemo(demo, daysBetween(demo.scenario.writtenAsOf, demoToday(demo, now)));
  await db.transaction((tx) => seedDemo(tx, moved));
  return true;
}

/** The source of the catalogue's own cautions: data/species.json says they were written from general knowledge. */
const generalKnowledge = 'Written from general knowledge; not yet checked against a regional field guide';

async function seedDemo(tx: Tx, demo: Demo) {
  const speciesIds = new Map<string, string>();
  for (const s of demo.species.species) {
    const [row] = await tx.insert(species).values(s).returning({ id: species.id });
    if (!row) continue;
    speciesIds.set(s.slug, row.id);
    if (s.cautions.length) {
      await tx.insert(speciesCautions).values(s.cautions.map((text, i) => ({ speciesId: row.id, position: i + 1, text, sourceTitle: generalKnowledge })));
    }
  }

  const userIds = await insertPeople(tx, demo.people, new Date(demo.scenario.landownersVerifiedAt));
  for (const s of demo.signUps) {
    await tx.update(users).set({ claimedLand: s.claimedLand, signUpNote: s.note }).where(eq(users.id, lookup(userIds, s.email, 'the person')));
  }

  const clubIds = new Map<string, string>();
  for (const club of demo.clubs) {
    const [row] = await tx.insert(clubs).values({ slug: club.slug, name: club.name, description: club.description }).returning({ id: clubs.id });
    if (!row) continue;
    clubIds.set(club.slug, row.id);
    for (const m of club.members) {
      await tx.insert(clubMemberships).values({
        clubId: row.id,
        userId: lookup(userIds, m.email, 'the person'),
        role: m.role,
        state: 'active',
        joinedAt: new Date(`${m.joinedOn}T12:00:00Z`),
      });
    }
  }

  const parcelIds = new Map<string, string>();
  for (const feature of demo.parcels.features) {
    const p = feature.properties;
    const [row] = await tx
      .insert(parcels)
      .values({
        ownerId: lookup(userIds, p.ownerEmail, 'the owner'),
        name: p.name,
        description: p.description,
        status: p.status,
        boundary: feature.geometry,
        areaM2: geodesicArea(feature.geometry),
        timeZone: p.timeZone,
        nearingThresholdPercent: p.nearingThresholdPercent,
        openToRequests: p.openToRequests,
      })
      .returning({ id: parcels.id });
    if (row) parcelIds.set(p.slug, row.id);
  }
  const parcelId = (slug: string) => lookup(parcelIds, slug, 'the parcel');

  for (const zone of demo.zones.features) {
    const z = zone.properties;
    await tx.insert(noHarvestZones).values({ parcelId: parcelId(z.parcelSlug), name: z.name, reason: z.reason, boundary: zone.geometry });
  }
  const { scenario } = demo;
  for (const h of scenario.hazards) await tx.insert(hazards).values({ ...h, parcelId: parcelId(h.parcelSlug) });
  for (const c of scenario.closures) await tx.insert(closures).values({ ...c, parcelId: parcelId(c.parcelSlug) });

  const termsIds = new Map<string, string>();
  for (const t of scenario.terms) {
    const [row] = await tx
      .insert(terms)
      .values({ parcelId: parcelId(t.parcelSlug), version: t.version, body: t.body, publishedAt: new Date(`${t.publishedOn}T12:00:00Z`) })
      .returning({ id: terms.id });
    if (row) termsIds.set(`${t.parcelSlug}#${t.version}`, row.id);
  }

  const allowanceFacts = new Map<string, AllowanceFacts>();
  for (const a of scenario.allowances) {
    allowanceFacts.set(`${a.parcelSlug}#${a.speciesSlug}`, {
      speciesId: lookup(speciesIds, a.speciesSlug, 'the species'), commonName: a.speciesSlug, scientificName: '', seasons: a.seasons, methods: a.methods,
      limits: a.limits.map((l) => ({ ...l, permitId: null })), cautions: [], lookalikes: [],
    });
    const [row] = await tx
      .insert(allowances)
      .values({ parcelId: parcelId(a.parcelSlug), speciesId: lookup(speciesIds, a.speciesSlug, 'the species'), seasons: a.seasons, methods: a.methods })
      .returning({ id: allowances.id });
    if (!row) continue;
    if (a.limits.length > 0) await tx.insert(limits).values(a.limits.map((l) => ({ ...l, allowanceId: row.id })));
  }

  const heldPermits: { id: string; parcelSlug: string; holder: string; startsOn: string; endsOn: string }[] = [];
  for (const p of scenario.permits) {
    const history = p.history;
    const last = history[history.length - 1];
    const activatedAt = history.find((h) => h.to === 'active')?.at;
    const holderUserId = p.holderEmail ? lookup(userIds, p.holderEmail, 'the holder') : null;
    // A permit granted directly (history starting at `approved`) had no requester.
    const requesterEmail = history[0]?.to === 'requested' ? history[0].byEmail : null;
    const requester = requesterEmail ? lookup(userIds, requesterEmail, 'the requester') : null;
    const [row] = await tx
      .insert(permits)
      .values({
        parcelId: parcelId(p.parcelSlug),
        holderUserId,
        holderClubId: p.holderClub ? lookup(clubIds, p.holderClub, 'the club') : null,
        state: p.state,
        startsOn: p.startsOn,
        endsOn: p.endsOn,
        feeMinor: p.feeMinor,
        currency: p.currency,
        feePaidAt: p.feePaid && activatedAt ? new Date(activatedAt) : null,
        acceptedTermsId: p.termsVersionAccepted ? lookup(termsIds, `${p.parcelSlug}#${p.termsVersionAccepted}`, 'the terms') : null,
        termsAcceptedAt: p.termsVersionAccepted && last ? new Date(activatedAt ?? last.at) : null,
        termsAcceptedBy: p.termsVersionAccepted ? (requester ?? holderUserId) : null,
        // What the requester wrote when asking (the history's first reason) is what a request card quotes;
        // the scenario's `note` describes the permit for whoever reads the file and stays there.
        requestNote: requesterEmail ? (history[0]?.reason ?? '') : p.note,
        requestedBy: requester,
        createdAt: history[0] ? new Date(history[0].at) : new Date(),
        updatedAt: last ? new Date(last.at) : new Date(),
      })
      .returning({ id: permits.id });
    if (!row) continue;
    if (['active', 'expired'].includes(p.state)) heldPermits.push({ id: row.id, parcelSlug: p.parcelSlug, holder: p.holderClub ?? p.holderEmail ?? '', startsOn: p.startsOn, endsOn: p.endsOn });
    await tx.insert(permitEvents).values(
      history.map((h) => ({ permitId: row.id, fromState: h.from, toState: h.to, actorId: h.byEmail ? lookup(userIds, h.byEmail, 'the person') : null, reason: h.reason, at: new Date(h.at) })),
    );
    const payer = requester ?? holderUserId;
    if (p.feePaid && p.feeMinor && p.currency && activatedAt && payer) {
      await tx.insert(payments).values({
        permitId: row.id,
        payerId: payer,
        amountMinor: p.feeMinor,
        currency: p.currency,
        state: 'paid',
        createdAt: new Date(activatedAt),
        paidAt: new Date(activatedAt),
      });
    }
  }

  const timeZones = new Map(demo.parcels.features.map((f) => [f.properties.slug, f.properties.timeZone]));
  for (const v of scenario.visits) {
    const holder = v.holderClub ?? v.foragerEmail;
    const permit = heldPermits.find((p) => p.parcelSlug === v.parcelSlug && p.holder === holder && p.startsOn <= v.localDate && v.localDate <= p.endsOn);
    if (!permit) throw new Error(`the demo visit of ${v.foragerEmail} on ${v.parcelSlug} on ${v.localDate} has no permit of ${holder} in force that day`);
    const foragerId = lookup(userIds, v.foragerEmail, 'the person');
    const pid = parcelId(v.parcelSlug);
    const zone = lookup(timeZones, v.parcelSlug, 'the parcel');
    const at = (time: string) => sql`(${v.localDate}::date + ${time}::time) at time zone ${zone}`;
    // Where a person stands on the parcel: a point PostGIS guarantees to be on it.
    const onParcel = sql`(select ST_PointOnSurface(p.boundary) from parcels p where p.id = ${pid})`;
    const [visit] = await tx
      .insert(visits)
      .values({ foragerId, parcelId: pid, permitId: permit.id, localDate: v.localDate, startedAt: at(v.from), endedAt: at(v.to), endedBy: 'check-out' })
      .returning({ id: visits.id });
    if (!visit) continue;
    await tx.insert(checkIns).values({ foragerId, position: onParcel, accuracyM: 8, verdict: 'clear', parcelId: pid, visitId: visit.id, at: at(v.from) });
    const entryAt = new Map<string, { id: string; rootId: string; facts: CountingFacts }>();
    for (const e of v.entries) {
      // Decided as the field decides it (src/lib/field/counting.ts); a correction counts where its chain began.
      const corrected = e.corrects ? lookup(entryAt, e.corrects, 'the entry at') : null;
      const allowance = lookup(allowanceFacts, `${v.parcelSlug}#${e.speciesSlug}`, 'the allowance of');
      const facts = corrected?.facts ?? countingFactsFor({ allowance, permit: { id: permit.id, holderClubId: v.holderClub ? lookup(clubIds, v.holderClub, 'the club') : null }, visitId: visit.id, localDate: v.localDate });
      if (!facts) throw new Error(`the demo entry of ${e.speciesSlug} on ${v.parcelSlug} on ${v.localDate} is out of its season`);
      const [row] = await tx
        .insert(harvestEntries)
        .values({
          idempotencyKey: `demo-${v.foragerEmail}-${v.localDate}-${e.at}`,
          foragerId,
          parcelId: pid,
          permitId: facts.permitId,
          clubId: facts.clubId,
          visitId: visit.id,
          speciesId: allowance.speciesId,
          method: e.method,
          localDate: v.localDate,
          countedOn: facts.countedOn,
          countedVisitId: facts.countedVisitId,
          seasonStart: facts.seasonStart,
          seasonEnd: facts.seasonEnd,
          position: onParcel,
          correctsEntryId: corrected?.id ?? null,
          rootEntryId: corrected?.rootId ?? null,
          correctionReason: e.reason ?? null,
          recordedBy: foragerId,
          recordedAt: at(e.at),
        })
        .returning({ id: harvestEntries.id });
      if (!row) continue;
      await tx.insert(harvestQuantities).values({ entryId: row.id, measure: measureOf(e.unit), quantity: e.quantity, unit: e.unit, baseQuantity: toBase(e.quantity, e.unit) });
      entryAt.set(e.at, { id: row.id, rootId: corrected?.rootId ?? row.id, facts });
    }
  }
}

async function insertPeople(tx: Tx, people: DemoPerson[], verifiedAt: Date) {
  const ids = new Map<string, string>();
  const admin = people.find((p) => p.roles.includes('admin'));
  for (const p of people) {
    const [row] = await tx.insert(users).values({ email: p.email, name: p.name, roles: p.roles }).returning({ id: users.id });
    if (row) ids.set(p.email, row.id);
  }
  const adminId = admin ? ids.get(admin.email) : undefined;
  for (const p of people.filter((p) => p.landownerVerified)) {
    await tx
      .update(users)
      .set({ landownerVerifiedAt: verifiedAt, landownerVerifiedBy: adminId ?? null })
      .where(sql`${users.email} = ${p.email}`);
  }
  return ids;
}
