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
  it('given the zooms a landowner uses, it picks round steps: 2° at 7, 0.2° at 10, 0.02° at 13, 0.002° at 17', () => {
    // Tile width 360 / 2^z, the widest round step not wider: z7 2.8125° → 2; z10 0.3515625° → 0.2;
    // z13 0.0439453125° → 0.02; z17 0.00274658° → 0.002.
    expect(graticuleStep(7)).toBe(2);
    expect(graticuleStep(10)).toBe(0.2);
    expect(graticuleStep(13)).toBe(0.02);
    expect(graticuleStep(17)).toBe(0.002);
  });

  it('given the whole world and the deepest zoom, it uses 90° and 0.00005°', () => {
    // z0: 360 → 90 (the widest step there is); z22: 8.58e-5 → 5e-5.
    expect(graticuleStep(0)).toBe(90);
    expect(graticuleStep(22)).toBe(0.00005);
  });

  it('given any zoom 1–22, it puts between 1 and 2.5 lines of longitude across a tile: faint, not a grid to read', () => {
    for (let z = 1; z <= 22; z += 1) {
      const lines = 360 / 2 ** z / graticuleStep(z);
      expect(lines, `zoom ${z}`).toBeGreaterThanOrEqual(1 - 1e-9);
      expect(lines, `zoom ${z}`).toBeLessThanOrEqual(2.5 + 1e-9);
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
  const textsOf = (tile: { z: number; x: number; y: number }) => Array.from(parse(renderTileSvg(tile)).getElementsByTagName('text')).map((t) => t.textContent ?? '');

  it('given the demo valley tile 13/2440/2980 (a fourth column), it draws a 256 px paper tile with one latitude label and no address', () => {
    const svg = renderTileSvg({ z: 13, x: 2440, y: 2980 });
    const root = parse(svg).documentElement!;
    expect(root.tagName).toBe('svg');
    expect(root.getAttribute('width')).toBe('256');
    expect(root.getAttribute('height')).toBe('256');
    // The tile spans 43.9295°N–43.9612°N (bounds from the worked example above); 0.02° lines: 43.94° and 43.96°.
    // 43.96°N lies 9.6 px below the top edge (too near it for a label), so the label is 43.94°N's, 171.5 px down
    // (the wiki's y = (1 − asinh(tan φ) / π) / 2 × 8192, less 2980, times 256).
    expect(textsOf({ z: 13, x: 2440, y: 2980 })).toEqual(['43.94°N']);
    expect(svg).not.toContain('2440');
  });

  it('given a tile in a fourth row but not a fourth column, it labels a longitude at the top edge instead', () => {
    // 13/2438/2980: x = 2438 (not a multiple of 4), y = 2980 (a multiple of 4). West edge 72.861328125°W, 0.0439453125°
    // wide: 72.86°W lies (0.001328125 / 0.0439453125) × 256 = 7.7 px in (too near the edge), 72.84°W at 124.4 px.
    expect(textsOf({ z: 13, x: 2438, y: 2980 })).toEqual(['72.84°W']);
  });

  it('given any tile at zooms 0–22 around the valley and the world, it carries at most one label and never its z/x/y', () => {
    for (let z = 0; z <= 22; z += 1) {
      const centre = lonLatToTile([-72.85, 43.95], z);
      for (let dx = -4; dx <= 4; dx += 1) {
        for (let dy = -4; dy <= 4; dy += 1) {
          const n = 2 ** z;
          const tile = { z, x: Math.min(n - 1, Math.max(0, centre.x + dx)), y: Math.min(n - 1, Math.max(0, centre.y + dy)) };
          const texts = textsOf(tile);
          expect(texts.length, JSON.stringify(tile)).toBeLessThanOrEqual(1);
          for (const text of texts) expect(text, JSON.stringify(tile)).toMatch(/^\d+(\.\d+)?°[NSEW]?$/);
          expect(renderTileSvg(tile)).not.toContain(`${tile.z}/${tile.x}/${tile.y}`);
        }
      }
    }
  });

  it('given the world tile 0/0/0, it labels the first parallel away from the edges (a fourth column and row)', () => {
    // 90° steps: the parallels at 0° (in the middle) and ±85.05° edges; the first roomy one from the north is 0°.
    expect(textsOf({ z: 0, x: 0, y: 0 })).toEqual(['0°']);
  });

  it('given the same tile twice, it draws the same bytes (a tile may be cached forever)', () => {
    expect(renderTileSvg({ z: 9, x: 151, y: 186 })).toBe(renderTileSvg({ z: 9, x: 151, y: 186 }));
  });
});

describe('resolveTileSource', () => {
  it('given no tile server, it uses our plain tiles to zoom 22 with their own credit, the drawing named in the URL', () => {
    expect(resolveTileSource({})).toEqual({ url: '/tiles/{z}/{x}/{y}.svg?look=paper-1', attribution: 'Tallywood plain map', maxZoom: 22 });
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
