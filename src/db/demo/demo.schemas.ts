import { z } from 'zod';
import { hazardKindEnum, limitScopeEnum, methodEnum, permitStateEnum, speciesKindEnum, unitEnum } from '../schema';

/** The files in data/ as the seed step reads them; a malformed file fails the seed with the path. */
const slug = z.string().regex(/^[a-z0-9-]+$/);
const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/);
const monthDay = z.string().regex(/^\d{2}-\d{2}$/);
const method = z.enum(methodEnum.enumValues);
const unit = z.enum(unitEnum.enumValues);

export const speciesFile = z.object({
  note: z.string(),
  species: z.array(
    z.object({
      slug,
      scientificName: z.string().min(1),
      commonName: z.string().min(1),
      kind: z.enum(speciesKindEnum.enumValues),
      usualUnit: unit,
      usualMethods: z.array(method),
      cautions: z.array(z.string().min(1)).min(1),
      lookalikes: z.array(z.object({ commonName: z.string(), scientificName: z.string(), danger: z.enum(['deadly', 'toxic', 'inedible']), howToTell: z.string() })),
      protectedStatus: z.string().nullable(),
    }),
  ),
});

export const person = z.object({
  email: z.email(),
  name: z.string().min(1),
  roles: z.array(z.enum(['forager', 'landowner', 'admin'])).min(1),
  landownerVerified: z.boolean(),
});

/** What a landowner wrote at sign-up for the admin who verifies them (data/demo/sign-ups.json). */
export const signUpsFile = z.array(z.object({ email: z.email(), claimedLand: z.string().min(1), note: z.string().min(1) }));

export const clubsFile = z.array(
  z.object({
    slug,
    name: z.string(),
    description: z.string(),
    members: z.array(z.object({ email: z.email(), role: z.enum(['member', 'steward']), joinedOn: isoDate })),
  }),
);

const geometry = z.object({ type: z.enum(['Polygon', 'MultiPolygon']), coordinates: z.array(z.any()) });

export const parcelsFile = z.object({
  type: z.literal('FeatureCollection'),
  features: z.array(
    z.object({
      type: z.literal('Feature'),
      geometry,
      properties: z.object({
        slug,
        name: z.string(),
        ownerEmail: z.email(),
        timeZone: z.string(),
        nearingThresholdPercent: z.number().int().min(1).max(100),
        openToRequests: z.boolean(),
        description: z.string(),
        status: z.enum(['draft', 'listed']),
      }),
    }),
  ),
});

export const zonesFile = z.object({
  type: z.literal('FeatureCollection'),
  features: z.array(z.object({ type: z.literal('Feature'), geometry, properties: z.object({ parcelSlug: slug, name: z.string(), reason: z.string() }) })),
});

const limit = z.object({ scope: z.enum(limitScopeEnum.enumValues), quantity: z.string().regex(/^\d+(\.\d+)?$/), unit });
/** A parcel-local time of day, HH:MM. */
const clock = z.string().regex(/^([01]\d|2[0-3]):[0-5]\d$/);

/** A past visit with its entries, under the permit of `holderClub` (or the forager's own) in force that day. */
const demoVisit = z.object({
  foragerEmail: z.email(),
  parcelSlug: slug,
  holderClub: slug.nullable().default(null),
  localDate: isoDate,
  from: clock,
  to: clock,
  entries: z
    .array(
      z.object({
        speciesSlug: slug,
        method,
        /** Signed only for a correction, which names the time of the entry it corrects in this visit. */
        quantity: z.string().regex(/^-?\d+(\.\d+)?$/),
        unit,
        at: clock,
        corrects: clock.optional(),
        reason: z.string().optional(),
      }),
    )
    .min(1),
});

export const scenarioFile = z.object({
  /** The day the scenario is written as if it were today; the loader moves every date by the days since (src/db/demo/shift.ts). */
  writtenAsOf: isoDate,
  /** When the verified landowners were verified. */
  landownersVerifiedAt: z.iso.datetime(),
  hazards: z.array(z.object({ parcelSlug: slug, kind: z.enum(hazardKindEnum.enumValues), title: z.string(), detail: z.string() })),
  closures: z.array(z.object({ parcelSlug: slug, startsOn: isoDate, endsOn: isoDate, reason: z.string() })),
  terms: z.array(z.object({ parcelSlug: slug, version: z.number().int().positive(), publishedOn: isoDate, body: z.string() })),
  allowances: z.array(
    z.object({
      parcelSlug: slug,
      speciesSlug: slug,
      seasons: z.array(z.object({ start: monthDay, end: monthDay })).min(1),
      methods: z.array(method).min(1),
      limits: z.array(limit),
    }),
  ),
  permits: z.array(
    z.object({
      parcelSlug: slug,
      holderEmail: z.email().nullable(),
      holderClub: slug.nullable(),
      state: z.enum(permitStateEnum.enumValues),
      startsOn: isoDate,
      endsOn: isoDate,
      feeMinor: z.number().int().nonnegative().nullable(),
      currency: z.string().nullable(),
      feePaid: z.boolean(),
      termsVersionAccepted: z.number().int().nullable(),
      note: z.string(),
      history: z
        .array(z.object({ from: z.enum(permitStateEnum.enumValues).nullable(), to: z.enum(permitStateEnum.enumValues), at: z.iso.datetime(), byEmail: z.email().nullable(), reason: z.string().optional().default('') }))
        .min(1),
    }),
  ),
  visits: z.array(demoVisit).default([]),
});

export type DemoPerson = z.infer<typeof person>;
