import { DOMParser } from '@xmldom/xmldom';
import { describe, expect, it } from 'vitest';
import {
  formatLatitude,
  formatLongitude,
  graticuleStep,
  graticuleValues,
  lonLatToTile,
  parseTile,
  renderTileSvg,
  resolveTileSource,
  stepDecimals,
  tileBounds,
  tileToLonLat,
} from '../../src/lib/tiles';

// The tile formulas are the OpenStreetMap wiki's "Slippy map tilenames" (Web Mercator, EPSG:3857):
// lon = x / 2^z × 360 − 180, lat = atan(sinh(π (1 − 2y / 2^z))).
// Mercator's limit ±85.0511287798° = atan(sinh(π)): from memory ✱.
const mercatorLimit = 85.0511287798;

describe('tile corners (OSM slippy-map convention)', () => {
  it('given tile 0/0/0, it covers the whole Mercator world, 180°W–180°E and ±85.0511287798° (from memory ✱)', () => {
    const b = tileBounds({ z: 0, x: 0, y: 0 });
    expect(b.west).toBe(-180);
    expect(b.east).toBe(180);
    expect(b.north).toBeCloseTo(mercatorLimit, 9);
    expect(b.south).toBeCloseTo(-mercatorLimit, 9);
  });

  it('given zoom 1, tile x=1 y=0, it is the north-east quarter: west edge 0°, south edge the equator (from memory ✱)', () => {
    const b = tileBounds({ z: 1, x: 1, y: 0 });
    expect(b.west).toBe(0);
    expect(b.east).toBe(180);
    expect(b.north).toBeCloseTo(mercatorLimit, 9);
    expect(b.south).toBeCloseTo(0, 12);
  });

  it('given a tile row a quarter of the way down, its north edge is gd(π/2) = 66.5132604431° (atan(sinh(π/2)) by hand)', () => {
    // 1 − 2 × (1/4) = 1/2, so lat = atan(sinh(π/2)) = atan(2.3012989023) = 66.5132604431°.
    expect(tileToLonLat({ z: 2, x: 0, y: 1 })[1]).toBeCloseTo(66.5132604431, 9);
    expect(tileToLonLat({ z: 10, x: 0, y: 256 })[1]).toBeCloseTo(66.5132604431, 9);
  });

  it('given the demo valley at 43.95°N 72.85°W, it lies in tile 13/2438/2980, whose NW corner is 72.861328125°W 43.9611906389°N', () => {
    // Worked by hand from the wiki formulas (checked on a calculator, not with our code):
    //   x = (−72.85 + 180) / 360 × 8192 = 2438.2578 → 2438; its west edge 2438 × 360 / 8192 − 180 = −72.861328125 exactly.
    //   y = (1 − ln(tan 43.95° + sec 43.95°) / π) / 2 × 8192 = (1 − ln(0.9640037 + 1.3889936) / π) / 2 × 8192
    //     = (1 − 0.8556900 / π) / 2 × 8192 = 2980.354 → 2980;
    //   its north edge atan(sinh(π (1 − 5960 / 8192))) = atan(sinh(0.8559573)) = 43.9611906389°.
    expect(lonLatToTile([-72.85, 43.95], 13)).toEqual({ z: 13, x: 2438, y: 2980 });
    const [lon, lat] = tileToLonLat({ z: 13, x: 2438, y: 2980 });
    expect(lon).toBe(-72.861328125);
    expect(lat).toBeCloseTo(43.9611906389, 9);
  });

  it('given positions beyond the Mercator limit or the antimeridian, it clamps them into the grid', () => {
    expect(lonLatToTile([180, 89.9], 3)).toEqual({ z: 3, x: 7, y: 0 });
    expect(lonLatToTile([-180, -89.9], 3)).toEqual({ z: 3, x: 0, y: 7 });
  });
});

describe('parseTile', () => {
  it('given plain decimals inside the zoom grid, it reads the tile', () => {
    expect(parseTile({ z: '0', x: '0', y: '0' })).toEqual({ z: 0, x: 0, y: 0 });
    expect(parseTile({ z: '13', x: '2438', y: '2980' })).toEqual({ z: 13, x: 2438, y: 2980 });
    expect(parseTile({ z: '22', x: '4194303', y: '4194303' })).toEqual({ z: 22, x: 4194303, y: 4194303 });
  });

  it('given a zoom past 22, an x or y outside 0…2^z − 1, or anything but a plain decimal, it names no tile', () => {
    for (const params of [
      { z: '23', x: '0', y: '0' },
      { z: '1', x: '2', y: '0' },
      { z: '1', x: '0', y: '2' },
      { z: '22', x: '4194304', y: '0' },
      { z: '-1', x: '0', y: '0' },
      { z: '1', x: '1.0', y: '0' },
      { z: '01', x: '0', y: '0' },
      { z: '1', x: '1e0', y: '0' },
      { z: '1', x: ' 1', y: '0' },
      { z: '1', x: '0' },
    ]) {
      expect(parseTile(params), JSON.stringify(params)).toBeNull();
    }
  });
});

describe('graticuleStep', () => {
  it('given the zooms a landowner uses, it picks round steps: 1° at 7, 0.1° at 10, 0.01° at 13, 0.001° at 17', () => {
    // Tile width 360 / 2^z, at least 2.5 lines a tile: z7 2.8125° / 2.5 = 1.125 → 1; z10 0.3515625 / 2.5 = 0.14 → 0.1;
    // z13 0.0439453125 / 2.5 = 0.0176 → 0.01; z17 0.00274658 / 2.5 = 0.0011 → 0.001.
    expect(graticuleStep(7)).toBe(1);
    expect(graticuleStep(10)).toBe(0.1);
    expect(graticuleStep(13)).toBe(0.01);
    expect(graticuleStep(17)).toBe(0.001);
  });

  it('given the whole world and the deepest zoom, it uses 90° and 0.00002°', () => {
    // z0: 360 / 2.5 = 144 → 90; z22: 8.58e-5 / 2.5 = 3.4e-5 → 2e-5.
    expect(graticuleStep(0)).toBe(90);
    expect(graticuleStep(22)).toBe(0.00002);
  });

  it('given any zoom 0–22, it puts between 2.5 and 6.25 lines of longitude across a tile', () => {
    for (let z = 0; z <= 22; z += 1) {
      const lines = 360 / 2 ** z / graticuleStep(z);
      expect(lines, `zoom ${z}`).toBeGreaterThanOrEqual(2.5 - 1e-9);
      expect(lines, `zoom ${z}`).toBeLessThanOrEqual(6.25 + 1e-9);
    }
  });

  it('given steps, it keeps just enough decimals to tell lines apart', () => {
    expect([90, 1, 0.5, 0.1, 0.05, 0.01, 0.00002].map(stepDecimals)).toEqual([0, 0, 1, 1, 2, 2, 5]);
  });

  it('given a range, it lists the multiples of the step without drift', () => {
    expect(graticuleValues(43.9295, 43.9612, 0.01).map((v) => v.toFixed(2))).toEqual(['43.93', '43.94', '43.95', '43.96']);
    expect(graticuleValues(-180, 180, 90)).toEqual([-180, -90, 0, 90, 180]);
  });
});

describe('coordinate labels', () => {
  it('given positions in the demo valley, it labels them 43.95°N and 72.85°W', () => {
    expect(formatLatitude(43.95, 2)).toBe('43.95°N');
    expect(formatLongitude(-72.85, 2)).toBe('72.85°W');
  });

  it('given the south, the east, the equator and the antimeridian, it labels them as people write them', () => {
    expect(formatLatitude(-12.5, 1)).toBe('12.5°S');
    expect(formatLongitude(3, 0)).toBe('3°E');
    expect(formatLatitude(-0, 2)).toBe('0°');
    expect(formatLongitude(1e-12, 3)).toBe('0°');
    expect(formatLongitude(-180, 0)).toBe('180°');
  });
});

describe('renderTileSvg', () => {
  const parse = (svg: string) => new DOMParser().parseFromString(svg, 'image/svg+xml');

  it('given the demo valley tile 13/2438/2980, it draws a 256 px SVG with 0.01° lines, their labels and its address', () => {
    const svg = renderTileSvg({ z: 13, x: 2438, y: 2980 });
    const doc = parse(svg);
    const root = doc.documentElement!;
    expect(root.tagName).toBe('svg');
    expect(root.getAttribute('width')).toBe('256');
    expect(root.getAttribute('height')).toBe('256');
    const texts = Array.from(doc.getElementsByTagName('text')).map((t) => t.textContent);
    // The tile spans 72.8613°W–72.8174°W and 43.9295°N–43.9612°N (bounds from the worked example above).
    expect(texts).toEqual(expect.arrayContaining(['43.95°N', '43.94°N', '72.85°W', '72.82°W', '13/2438/2980']));
  });

  it('given the world tile 0/0/0, it labels the equator and the prime meridian 0°', () => {
    const texts = Array.from(parse(renderTileSvg({ z: 0, x: 0, y: 0 })).getElementsByTagName('text')).map((t) => t.textContent);
    expect(texts).toEqual(expect.arrayContaining(['0°', '90°W', '90°E', '0/0/0']));
  });

  it('given the same tile twice, it draws the same bytes (a tile may be cached forever)', () => {
    expect(renderTileSvg({ z: 9, x: 151, y: 186 })).toBe(renderTileSvg({ z: 9, x: 151, y: 186 }));
  });
});

describe('resolveTileSource', () => {
  it('given no tile server, it uses our grid tiles to zoom 22 with the grid credit', () => {
    expect(resolveTileSource({})).toEqual({ url: '/tiles/{z}/{x}/{y}.svg', attribution: 'Tallywood grid — no base map data', maxZoom: 22 });
  });

  it('given a tile server, it uses it to zoom 19 unless told, crediting its host when no attribution is set', () => {
    expect(resolveTileSource({ url: 'https://tile.example.org/{z}/{x}/{y}.png' })).toEqual({
      url: 'https://tile.example.org/{z}/{x}/{y}.png',
      attribution: 'Map tiles: tile.example.org',
      maxZoom: 19,
    });
    expect(resolveTileSource({ url: 'https://tile.example.org/{z}/{x}/{y}.png', attribution: '© Example', maxZoom: 17 })).toMatchObject({ attribution: '© Example', maxZoom: 17 });
  });

  it('given a template without {z}, {x} and {y}, it refuses to start with a message that names the variable', () => {
    expect(() => resolveTileSource({ url: 'https://tile.example.org/tiles.png' })).toThrow(/MAP_TILE_URL must contain \{z\}, \{x\}, \{y\}/);
    expect(() => resolveTileSource({ url: 'ftp://tile.example.org/{z}/{x}/{y}.png' })).toThrow(/MAP_TILE_URL must start with/);
  });
});
