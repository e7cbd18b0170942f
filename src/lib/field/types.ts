import type { Measure, Unit } from '../units';

/**
 * The field engine's inputs and answers. Everything here is plain data so the same engine runs on
 * the server and in the browser (the offline field pack). Time is always an argument.
 */
export type LonLat = [number, number];
export type MultiPolygon = { type: 'MultiPolygon'; coordinates: number[][][][] };
export type Method = 'cut' | 'pick' | 'dig' | 'strip' | 'gather-fallen';
export type LimitScope = 'visit' | 'day' | 'season' | 'parcel-season' | 'club-season';
export type Verdict = 'clear' | 'outside' | 'no-permit' | 'edge' | 'closed';
export type TallyState = 'within' | 'nearing' | 'reached' | 'over';
export type SpeciesState = 'open' | 'out-of-season' | 'method-not-allowed' | TallyState;

/** Where a position stands against one boundary, given a 95 % accuracy radius in metres. */
export type Placement = { placement: 'inside' | 'outside' | 'edge'; distanceToEdgeM: number };

export type PermitFacts = {
  id: string;
  holderUserId: string | null;
  holderClubId: string | null;
  state: 'requested' | 'approved' | 'active' | 'expired' | 'revoked' | 'declined';
  startsOn: string;
  endsOn: string;
  feeMinor: number | null;
  feePaid: boolean;
  acceptedTermsId: string | null;
};

export type LimitFacts = { scope: LimitScope; quantity: string; unit: Unit; /** null: the parcel's own limit */ permitId: string | null };

export type AllowanceFacts = {
  speciesId: string;
  commonName: string;
  scientificName: string;
  seasons: { start: string; end: string }[];
  methods: Method[];
  limits: LimitFacts[];
  cautions: string[];
  lookalikes: { commonName: string; scientificName: string; danger: string; howToTell: string }[];
};

export type ParcelFacts = {
  id: string;
  name: string;
  timeZone: string;
  nearingThresholdPercent: number;
  boundary: MultiPolygon;
  zones: { id: string; name: string; reason: string; boundary: MultiPolygon }[];
  closures: { startsOn: string; endsOn: string; reason: string }[];
  hazards: { kind: string; title: string; detail: string }[];
  currentTermsId: string | null;
  permits: PermitFacts[];
  allowances: AllowanceFacts[];
};

/**
 * What the database measured of one position against one boundary: whether the boundary covers it
 * (PostGIS `ST_Covers` on the geometry, in the plane, as `boundaryContains` decides) and the
 * geodesic metres to its nearest edge (geography `ST_Distance` to `ST_Boundary`, as
 * `distanceToEdgeM` measures). The server passes these in place of the boundary, so the engine
 * need not walk its vertices. A position in a parcel's cut-out is farther than the accuracy radius
 * from the parcel, so the server finds such a parcel by its bounding box and passes its boundary.
 */
export type MeasuredPosition = { covered: boolean; distanceToEdgeM: number };

/** A parcel as the server's check-in sees it: measured at the check-in's position (and its zones too), no boundary. */
export type MeasuredParcelFacts = Omit<ParcelFacts, 'boundary' | 'zones'> & {
  at: MeasuredPosition;
  zones: (Omit<ParcelFacts['zones'][number], 'boundary'> & { at: MeasuredPosition })[];
};

export type Forager = { id: string; clubIds: string[] };

/**
 * What has been taken so far of one species in one measure, as decimal strings in the measure's
 * base unit (g, mL, or items): this visit, this day and this season for the forager (under any
 * permit), everyone on the parcel this season, and each club's members under its permits this
 * season (by club id). Absent means nothing taken.
 */
export type ScopeUsage = { visit?: string; day?: string; season?: string; 'parcel-season'?: string; 'club-season'?: Record<string, string> };

/** Usage by species id, then by measure. */
export type Usage = Record<string, Partial<Record<Measure, ScopeUsage>>>;

/** One quantity of an entry: an entry gives one per measure its allowance limits ("200 g or 50 plants"). */
export type EntryQuantity = { quantity: string; unit: Unit };

export type Tally = {
  scope: LimitScope;
  measure: Measure;
  limit: { quantity: string; unit: Unit; fromPermit: boolean };
  /** In the limit's own unit, as decimal strings rounded to 6 places for display. */
  used: string;
  remaining: string;
  /** Of the limit, rounded half up to one decimal (percentOf in src/lib/units.ts). */
  percent: number;
  state: TallyState;
};

export type SpeciesAnswer = {
  speciesId: string;
  commonName: string;
  scientificName: string;
  state: SpeciesState;
  inSeason: boolean;
  seasons: { start: string; end: string }[];
  methods: Method[];
  tallies: Tally[];
  cautions: string[];
  lookalikes: AllowanceFacts['lookalikes'];
};

export type CheckInAnswer = {
  verdict: Verdict;
  /** Plain sentences a person understands: why this verdict, and what to do. */
  reasons: string[];
  parcel: { id: string; name: string; timeZone: string } | null;
  permitId: string | null;
  distanceToEdgeM: number | null;
  localDate: string;
  hazards: ParcelFacts['hazards'];
  species: SpeciesAnswer[];
};
