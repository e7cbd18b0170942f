import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { root } from '../lib/setup.mjs';

/** V8's CPU profile as `node --cpu-prof` writes it (the DevTools protocol's Profiler.Profile). */
type Profile = {
  nodes: { id: number; callFrame: { functionName: string; url: string; lineNumber: number; columnNumber: number }; hitCount?: number; children?: number[] }[];
  startTime: number;
  endTime: number;
  samples: number[];
  timeDeltas: number[];
};

export type SelfTime = { name: string; where: string; ms: number; percent: number };

export type ProfileFigures = {
  file: string;
  /** The span of the profile counted: its last `windowMs`, the measured run. */
  windowMs: number;
  /** Sampled time in the window that was not idle (JavaScript, GC, the runtime's own work). */
  busyMs: number;
  idleMs: number;
  top: SelfTime[];
};

/**
 * The functions with the most self time in the newest .cpuprofile of `dir`, counting only the
 * samples of its last `windowMs` (the server's start-up and warm-up fall before them). Each sample
 * lasts until the next one (the next time delta), as DevTools counts it; `(idle)` is left out of
 * the list and of the percentages, which are shares of the busy time. A function of Node's own
 * (native, or in node: internals, such as a socket's writeBuffer) is named with the nearest caller
 * outside Node that led to it, so time in a system call says whose call it was.
 */
export function topSelfTime(dir: string, windowMs: number, count = 10): ProfileFigures {
  const files = readdirSync(dir).filter((n) => n.endsWith('.cpuprofile')).sort();
  const name = files[files.length - 1];
  if (!name) throw new Error(`no .cpuprofile in ${dir}`);
  const profile = JSON.parse(readFileSync(join(dir, name), 'utf8')) as Profile;
  const byId = new Map(profile.nodes.map((n) => [n.id, n]));
  const parentOf = new Map<number, number>();
  for (const n of profile.nodes) for (const child of n.children ?? []) parentOf.set(child, n.id);
  const place = (frame: Profile['nodes'][number]['callFrame']) =>
    `${frame.url.replace(/^file:\/\//, '').replace(/^.*\/node_modules\//, '').replace(`${root}/`, '')}:${frame.lineNumber + 1}:${frame.columnNumber + 1}`;
  const ownCaller = (id: number): string => {
    for (let at = parentOf.get(id); at !== undefined; at = parentOf.get(at)) {
      const frame = byId.get(at)?.callFrame;
      if (frame?.url && !frame.url.startsWith('node:')) return `via ${frame.functionName || '(anonymous)'} ${place(frame)}`;
    }
    return '';
  };
  const from = profile.endTime - windowMs * 1000;
  const self = new Map<string, { name: string; where: string; us: number }>();
  let busyUs = 0;
  let idleUs = 0;
  let at = profile.startTime;
  for (let i = 0; i < profile.samples.length; i += 1) {
    at += profile.timeDeltas[i] ?? 0;
    if (at < from) continue;
    const duration = Math.max(0, profile.timeDeltas[i + 1] ?? 0);
    const node = byId.get(profile.samples[i] as number);
    if (!node) continue;
    const { functionName, url } = node.callFrame;
    if (functionName === '(idle)') {
      idleUs += duration;
      continue;
    }
    busyUs += duration;
    const where = url && !url.startsWith('node:') ? place(node.callFrame) : ownCaller(node.id);
    const key = `${functionName}@${where}`;
    const entry = self.get(key) ?? { name: functionName || '(anonymous)', where, us: 0 };
    entry.us += duration;
    self.set(key, entry);
  }
  const top = [...self.values()]
    .sort((a, b) => b.us - a.us)
    .slice(0, count)
    .map((e) => ({ name: e.name, where: e.where, ms: e.us / 1000, percent: busyUs > 0 ? (100 * e.us) / busyUs : 0 }));
  return { file: join(dir, name).replace(`${root}/`, ''), windowMs, busyMs: busyUs / 1000, idleMs: idleUs / 1000, top };
}
