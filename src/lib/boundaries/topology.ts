import { capitalize, describeRing, type Parts } from './coordinates';
import { formatPosition } from './geodesy';
import { locateInPolygon, locateInRing, ringBox, ringEdges, sweepMeetings, type Edge } from './planar';
import type { BoundaryProblem, Position } from './types';

/**
 * The simple-features validity rules PostGIS applies through GEOS (OGC 06-103r4 §6.1.11): rings are
 * simple, holes lie inside their exterior and do not cross it or each other, rings of one polygon
 * touch at single points only and never cut its interior in two, and parts of a MultiPolygon do not
 * overlap. Run after the shape checks, on closed rings of at least four positions.
 */
export function topologyProblems(parts: Parts): BoundaryProblem[] {
  const multipart = parts.length > 1;
  const rings = parts.map((polygon) => polygon.map(withoutRepeats));
  const edges: Edge[] = rings.flatMap((polygon, p) => polygon.flatMap((ring, r) => ringEdges(ring, p, r)));
  // One problem per ring, ring pair or part pair, counting the distinct places it happens.
  const found = new Map<string, { problem: BoundaryProblem; places: Set<string> }>();
  const note = (key: string, problem: BoundaryProblem & { at: Position }) => {
    const seen = found.get(key) ?? { problem, places: new Set<string>() };
    seen.places.add(`${problem.at[0]} ${problem.at[1]}`);
    found.set(key, seen);
  };
  const touches = new Map<number, Map<string, [number, number, Position]>>();

  sweepMeetings(edges, (e, f, meeting) => {
    const where = formatPosition(meeting.at);
    if (e.part === f.part && e.ring === f.ring) {
      const size = (rings[e.part]?.[e.ring]?.length ?? 1) - 1;
      const gap = Math.abs(e.index - f.index);
      const adjacent = gap === 1 || gap === size - 1;
      if (adjacent && meeting.kind !== 'overlap') return; // neighbours share their corner
      note(`self ${e.part} ${e.ring}`, {
        code: 'self-intersection',
        message: `${capitalize(describeRing(e.part + 1, e.ring + 1, multipart))} ${meeting.kind === 'proper' ? 'crosses' : 'touches'} itself near ${where}; redraw that corner so the line passes each point once and does not double back.`,
        at: meeting.at, part: e.part + 1, ring: e.ring + 1,
      });
    } else if (e.part === f.part) {
      if (meeting.kind === 'touch') {
        const [low, high] = e.ring < f.ring ? [e.ring, f.ring] : [f.ring, e.ring];
        const byPart = touches.get(e.part) ?? new Map<string, [number, number, Position]>();
        byPart.set(`${low} ${high} ${meeting.at[0]} ${meeting.at[1]}`, [low, high, meeting.at]);
        touches.set(e.part, byPart);
        return;
      }
      const [low, high] = e.ring < f.ring ? [e.ring, f.ring] : [f.ring, e.ring];
      note(`rings ${e.part} ${low} ${high}`, {
        code: 'rings-cross',
        message: `${capitalize(describeRing(e.part + 1, high + 1, multipart))} ${meeting.kind === 'proper' ? 'crosses' : 'runs along'} ${describeRing(e.part + 1, low + 1, multipart)} near ${where}; ${low === 0 ? 'a hole must lie inside the outer edge, touching it at one point at most' : 'holes may touch at a point but not cross or share an edge'}. Move that edge.`,
        at: meeting.at, part: e.part + 1, ring: high + 1,
      });
    } else if (meeting.kind !== 'touch') {
      const [low, high] = e.part < f.part ? [e.part, f.part] : [f.part, e.part];
      note(`parts ${low} ${high}`, {
        code: 'parts-overlap',
        message: `Parts ${low + 1} and ${high + 1} overlap near ${where}; parts of one boundary may meet at a point but not share ground or an edge. Merge them into one part or move the edge.`,
        at: meeting.at, part: high + 1,
      });
    }
  });

  const problems = [...found.values()].map(({ problem, places }) =>
    places.size > 1 ? { ...problem, message: `${problem.message} (It happens in ${places.size} places; one is shown.)` } : problem,
  );
  if (problems.length > 0) return problems; // containment below assumes no crossings

  for (const [p, polygon] of rings.entries()) {
    problems.push(...holeProblems(polygon, p, multipart), ...disconnectedInterior(touches.get(p), p, multipart));
  }
  problems.push(...nestedParts(rings));
  return problems;
}

/** Consecutive repeated positions are allowed (PostGIS ignores them) but would make zero-length edges. */
function withoutRepeats(ring: Position[]): Position[] {
  return ring.filter((position, i) => i === 0 || position[0] !== ring[i - 1]?.[0] || position[1] !== ring[i - 1]?.[1]);
}

function holeProblems([exterior, ...holes]: Position[][], p: number, multipart: boolean): BoundaryProblem[] {
  if (!exterior) return [];
  const problems: BoundaryProblem[] = [];
  const box = ringBox(exterior);
  for (const [h, hole] of holes.entries()) {
    const places = hole.map((position) => locateInRing(position, exterior, box));
    const outside = hole.find((_, i) => places[i] === 'outside');
    if (outside && places.includes('inside')) {
      problems.push({
        code: 'rings-cross', at: outside, part: p + 1, ring: h + 2,
        message: `${capitalize(describeRing(p + 1, h + 2, multipart))} runs outside the outer edge near ${formatPosition(outside)}; a hole must lie wholly inside. Move that corner in.`,
      });
    } else if (outside) {
      problems.push({
        code: 'hole-outside', at: outside, part: p + 1, ring: h + 2,
        message: `${capitalize(describeRing(p + 1, h + 2, multipart))} lies outside the outer edge (near ${formatPosition(outside)}); a hole must be inside the land it is cut from. Delete it, or make it a part of its own if it is land you hold.`,
      });
    }
  }
  for (const [i, hole] of holes.entries()) {
    for (const [j, other] of holes.entries()) {
      if (j <= i) continue;
      const inside = hole.find((position) => locateInRing(position, other) === 'inside') ?? other.find((position) => locateInRing(position, hole) === 'inside');
      if (!inside) continue;
      problems.push({
        code: 'holes-overlap', at: inside, part: p + 1, ring: j + 2,
        message: `${capitalize(describeRing(p + 1, i + 2, multipart))} and ${describeRing(p + 1, j + 2, multipart)} overlap near ${formatPosition(inside)}; holes may not nest or overlap. Delete one of them or merge them.`,
      });
    }
  }
  return problems;
}

/**
 * Rings that touch at points form a graph; a cycle in it (say a hole touching the outer edge twice)
 * cuts the interior in two, which GEOS reports as "Interior is disconnected". Union–find over rings.
 */
function disconnectedInterior(touches: Map<string, [number, number, Position]> | undefined, p: number, multipart: boolean): BoundaryProblem[] {
  if (!touches) return [];
  const parent = new Map<number, number>();
  const find = (ring: number): number => {
    const up = parent.get(ring) ?? ring;
    if (up === ring) return ring;
    const root = find(up);
    parent.set(ring, root);
    return root;
  };
  for (const [a, b, at] of touches.values()) {
    const [ra, rb] = [find(a), find(b)];
    if (ra === rb) {
      return [{
        code: 'interior-disconnected', at, part: p + 1, ring: b + 1,
        message: `${capitalize(describeRing(p + 1, b + 1, multipart))} touches the other rings at more than one point, near ${formatPosition(at)}, which cuts the land into separate pieces. Move the hole off the edge, or draw the pieces as separate parts.`,
      }];
    }
    parent.set(ra, rb);
  }
  return [];
}

/** A part lying inside another part (not in one of its holes) overlaps it (GEOS "Nested shells"). */
function nestedParts(rings: Position[][][]): BoundaryProblem[] {
  const boxes = rings.map((polygon) => ringBox(polygon[0] ?? []));
  for (const [q, inner] of rings.entries()) {
    for (const [p, outer] of rings.entries()) {
      const [a, b] = [boxes[q], boxes[p]];
      if (p === q || !a || !b || a.minX > b.maxX || a.maxX < b.minX || a.minY > b.maxY || a.maxY < b.minY) continue;
      const inside = (inner[0] ?? []).find((position) => locateInPolygon(position, outer) === 'inside');
      if (inside) {
        return [{
          code: 'parts-overlap', at: inside, part: q + 1,
          message: `Part ${q + 1} lies inside part ${p + 1} (near ${formatPosition(inside)}); parts of one boundary may not overlap. Delete the inner one, or cut it out as a hole.`,
        }];
      }
    }
  }
  return [];
}
