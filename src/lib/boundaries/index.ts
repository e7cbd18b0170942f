/** Boundary files and geometry: read (parse.ts), judge (validate.ts), reshape (shape.ts). Pure; runs in the browser too. */
export { parseBoundaryFile, type BoundaryFileFormat, type ParseResult } from './parse';
export { checkBoundary, defaultBoundaryLimits } from './validate';
export { mergeFeatures, normalizeWinding, toMultiPolygon, zoneInsideParcel } from './shape';
export { problemFromPostgis } from './postgis-reasons';
export { formatPosition, geodesicDistanceM, geodesicAreaM2 } from './geodesy';
export { gpxClosingToleranceM } from './kml-gpx';
export * from './types';
