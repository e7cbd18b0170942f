/** A GeoJSON position without altitude: [longitude, latitude] in degrees (RFC 7946 §3.1.1). */
export type Position = [number, number];

/** RFC 7946 §3.1.6: the first ring is the exterior, any others are holes. */
export type PolygonGeometry = { type: 'Polygon'; coordinates: number[][][] };
/** RFC 7946 §3.1.7: an array of Polygon coordinate arrays. */
export type MultiPolygonGeometry = { type: 'MultiPolygon'; coordinates: number[][][][] };
export type BoundaryGeometry = PolygonGeometry | MultiPolygonGeometry;

/** One area read from an uploaded file, with the name the file gave it. */
export type BoundaryFeature = { name: string | null; geometry: BoundaryGeometry };

/**
 * Something a landowner must fix before a boundary is saved. `at` is [longitude, latitude] so a map
 * can mark the spot; `part` and `ring` are counted from 1 as the messages count them.
 */
export type BoundaryProblem = { code: string; message: string; at?: [number, number]; part?: number; ring?: number };

export type BoundaryLimits = { maxVertices: number; maxAreaHectares: number };

/**
 * The stable codes a boundary problem or warning carries, for API clients and forms. Messages may
 * change wording; codes do not.
 */
export const boundaryProblemCodes = [
  // reading the file (parse.ts, file-limits.ts)
  'unsupported-format', 'unsupported-crs', 'no-polygon', 'open-track', 'file-too-complex',
  // shape and coordinates (validate.ts)
  'not-a-polygon', 'bad-coordinates', 'too-few-positions', 'unclosed-ring', 'out-of-range', 'swapped-coordinates',
  'crosses-antimeridian', 'too-many-vertices', 'too-large', 'empty',
  // topology (validate.ts, and PostGIS ST_IsValidReason mapped in postgis-reasons.ts)
  'self-intersection', 'rings-cross', 'hole-outside', 'holes-overlap', 'parts-overlap', 'interior-disconnected', 'invalid-geometry',
  // no-harvest zones (boundaries.queries.ts)
  'zone-outside-parcel',
] as const;
export type BoundaryProblemCode = (typeof boundaryProblemCodes)[number];
