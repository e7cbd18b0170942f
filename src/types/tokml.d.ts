/** tokml 0.4 ships no types; this is the part of its API Tallywood uses (its README). */
declare module 'tokml' {
  import type { Feature, FeatureCollection, Geometry } from 'geojson';

  type Options = {
    /** The KML Document's <name>. */
    documentName?: string;
    /** The KML Document's <description>. */
    documentDescription?: string;
    /** The feature property written as each Placemark's <name>. */
    name?: string;
    /** The feature property written as each Placemark's <description>. */
    description?: string;
    simplestyle?: boolean;
    timestamp?: string;
  };

  export default function tokml(geojson: FeatureCollection | Feature | Geometry, options?: Options): string;
}
