import geodesic from 'geographiclib-geodesic';
import { describe, expect, it } from 'vitest';
import { geodesicDistanceM } from '../../src/lib/field/geodesy';
import { boundaryContains, distanceToEdgeM, placePosition } from '../../src/lib/field/geometry';
import type { LonLat, MultiPolygon } from '../../src/lib/field/types';

/*
 * Published values: Karney 2013, "Algorithms for geodesics", J. Geodesy 87:43–55, Table 3 ✔, and
 * GeographicLib's test GeodSolve74 ✔ (REFERENCES §2). Other expected distances come from the
 * reference library geographiclib-geodesic 2.2.0 (⚙), which takes (lat, lon).
 */
const WGS84 = geodesic.Geodesic.WGS84;
const inverse = ([lon1, lat1]: LonLat, [lon2, lat2]: LonLat) => WGS84.Inverse(lat1, lon1, lat2, lon2).s12 ?? Number.NaN;
const direct = ([lon, lat]: LonLat, azimuth: number, metres: number): LonLat => {
  const r = WGS84.Direct(lat, lon, azimuth, metres);
  return [r.lon2 ?? Number.NaN, r.lat2 ?? Number.NaN];
};
const multi = (...polygons: number[][][][]): MultiPolygon => ({ type: 'MultiPolygon', coordinates: polygons });
const box = (west: number, south: number, east: number, north: number, clockwise = false): LonLat[] =>
  clockwise ? [[west, south], [west, north], [east, north], [east, south], [west, south]] : [[west, south], [east, south], [east, north], [west, north], [west, south]];
const mm = 0.001;

describe('geodesicDistanceM against published geodesics', () => {
  it('given the short line (−30.12345, 0) → (−30.12344, 0.00005), it is 4.944208 m within 1 mm (Karney 2013, Table 3)', () => {
    expect(Math.abs(geodesicDistanceM([0, -30.12345], [0.00005, -30.12344]) - 4.944208)).toBeLessThan(mm);
  });
  it('given (54.1589, 15.3872) → (54.1591, 15.3877), it is 39.527686385 m within 1 mm (GeographicLib GeodSolve74)', () => {
    expect(Math.abs(geodesicDistanceM([15.3872, 54.1589], [15.3877, 54.1591]) - 39.527686385)).toBeLessThan(mm);
  });
  it('given 2 000 seeded random lines up to 5 km anywhere off the poles, it agrees with GeographicLib within 0.1 mm', () => {
    let seed = 74; // mulberry32, seed 74
    const random = () => {
      seed = (seed + 0x6d2b79f5) | 0;
      let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
      t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    let worst = 0;
    for (let i = 0; i < 2000; i += 1) {
      const from: LonLat = [random() * 360 - 180, random() * 160 - 80];
      const to = direct(from, random() * 360, random() * 5000);
      worst = Math.max(worst, Math.abs(geodesicDistanceM(from, to) - inverse(from, to)));
    }
    expect(worst).toBeLessThan(0.0001);
  });
});

describe('distanceToEdgeM where the nearest point is a vertex', () => {
  it('given a parcel whose corner is the far end of Karney’s short line, the distance is 4.944208 m within 1 mm (Table 3)', () => {
    const corner: LonLat = [0.00005, -30.12344];
    const parcel = multi([[corner, [0.00105, -30.12294], [0.00055, -30.12244], corner]]);
    expect(Math.abs(distanceToEdgeM(parcel, [0, -30.12345]) - 4.944208)).toBeLessThan(mm);
    expect(placePosition([0, -30.12345], 4, parcel).placement).toBe('outside');
  });
  it('given a parcel whose corner is the far end of GeodSolve74, the distance is 39.527686385 m within 1 mm', () => {
    const corner: LonLat = [15.3877, 54.1591];
    const parcel = multi([[corner, [15.3887, 54.1594], [15.388, 54.1601], corner]]);
    expect(Math.abs(distanceToEdgeM(parcel, [15.3872, 54.1589]) - 39.527686385)).toBeLessThan(mm);
  });
  it('given a position 10 km south-west of a parcel, it is outside and the distance is to the south-west corner', () => {
    const parcel = multi([box(-72.852, 43.948, -72.848, 43.952)]);
    const far = direct([-72.852, 43.948], 225, 10_000);
    expect(Math.abs(distanceToEdgeM(parcel, far) - 10_000)).toBeLessThan(mm);
    expect(placePosition(far, 20, parcel).placement).toBe('outside');
  });
});

describe('holes (RFC 7946 §3.1.6: a hole is not the parcel)', () => {
  const exterior = box(-72.852, 43.948, -72.848, 43.952);
  const hole = box(-72.8505, 43.9495, -72.8495, 43.9505, true);
  const parcel = multi([exterior, hole]);
  const holeCentre: LonLat = [-72.85, 43.95];
  it('given the centre of the hole, it is outside the parcel', () => {
    expect(boundaryContains(parcel, holeCentre)).toBe(false);
    expect(placePosition(holeCentre, 10, parcel).placement).toBe('outside');
  });
  it('given the centre of the hole, the distance is to the hole’s nearer (east and west) edges, about 40 m', () => {
    // The hole's east edge is a meridian; its nearest point lies at the same latitude to well under 1 mm.
    const expected = inverse(holeCentre, [-72.8495, 43.95]);
    expect(Math.abs(distanceToEdgeM(parcel, holeCentre) - expected)).toBeLessThan(mm);
  });
  it('given an accuracy radius wider than the distance to the hole’s edge, it is edge', () => {
    expect(placePosition(holeCentre, 50, parcel)).toMatchObject({ placement: 'edge' });
  });
  it('given a point between the hole and the exterior, it is inside', () => {
    expect(placePosition([-72.851, 43.9485], 10, parcel).placement).toBe('inside');
  });
  it('given the hole wound counter-clockwise (RFC 7946: parsers SHOULD NOT reject winding), it still is a hole', () => {
    const rewound = multi([[...exterior].reverse(), box(-72.8505, 43.9495, -72.8495, 43.9505)]);
    expect(boundaryContains(rewound, holeCentre)).toBe(false);
    expect(boundaryContains(rewound, [-72.851, 43.9485])).toBe(true);
  });
});

describe('MultiPolygons (RFC 7946 §3.1.7)', () => {
  const west = box(-72.86, 43.95, -72.858, 43.952);
  const east = box(-72.85, 43.95, -72.848, 43.952);
  const parcel = multi([west], [east]);
  it('given a point in the second part, it is inside', () => {
    expect(placePosition([-72.849, 43.951], 10, parcel).placement).toBe('inside');
  });
  it('given a point between the parts, it is outside, and the distance is to the nearer part', () => {
    const between: LonLat = [-72.851, 43.951];
    expect(placePosition(between, 10, parcel).placement).toBe('outside');
    expect(Math.abs(distanceToEdgeM(parcel, between) - inverse(between, [-72.85, 43.951]))).toBeLessThan(mm);
  });
});

describe('accuracy against the edge', () => {
  const parcel = multi([box(-72.852, 43.948, -72.848, 43.952)]);
  const onWestEdge: LonLat = [-72.852, 43.95];
  const fiveIn = direct(onWestEdge, 90, 5);
  const fiveOut = direct(onWestEdge, 270, 5);
  it('given a position 5 m inside the west edge, it is 5 m from the edge within 1 mm', () => {
    expect(Math.abs(distanceToEdgeM(parcel, fiveIn) - 5)).toBeLessThan(mm);
  });
  it('given 5 m inside and a 4.9 m radius, it is inside; with 5.1 m, edge', () => {
    expect(placePosition(fiveIn, 4.9, parcel).placement).toBe('inside');
    expect(placePosition(fiveIn, 5.1, parcel).placement).toBe('edge');
  });
  it('given 5 m outside and a 4.9 m radius, it is outside; with 5.1 m, edge', () => {
    expect(placePosition(fiveOut, 4.9, parcel).placement).toBe('outside');
    expect(placePosition(fiveOut, 5.1, parcel).placement).toBe('edge');
  });
  it('given a position exactly on a corner or an edge, it is edge even with no uncertainty', () => {
    expect(placePosition([-72.852, 43.948], 0, parcel)).toEqual({ placement: 'edge', distanceToEdgeM: 0 });
    expect(placePosition(onWestEdge, 0, parcel)).toEqual({ placement: 'edge', distanceToEdgeM: 0 });
  });
  it('given a negative or missing accuracy, or a position out of range, it throws RangeError', () => {
    expect(() => placePosition(fiveIn, -1, parcel)).toThrow(RangeError);
    expect(() => placePosition(fiveIn, Number.NaN, parcel)).toThrow(RangeError);
    expect(() => placePosition([43.95, -192], 5, parcel)).toThrow(RangeError);
  });
});
