import { useEffect, useId, useState } from 'react';
import { Bar, BarChart, CartesianGrid, Cell, LabelList, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { TallyState } from '../../lib/field/types';
import type { AuditChartBar } from '../../db/audit.queries';
import { auditScopeLabels, chartCeiling, formatPercent, formatUsage, stateFills, statePatterns, stateSymbols, stateWords, tallyStates, unitLabel } from './audit-view';

/** The club audit's chart: each forager's tally closest to its limit as a bar, with the limit at 100 %. */
type LabelProps = { x?: number | string; y?: number | string; width?: number | string; height?: number | string; value?: unknown };
const num = (v: number | string | undefined) => Number(v ?? 0);

/** A bar's caption on one line just past its end, however short the bar: it never wraps onto its neighbours. */
function BarCaption({ x, y, width, height, value }: LabelProps) {
  return <text x={num(x) + num(width) + 6} y={num(y) + num(height) / 2} dominantBaseline="central" fontSize={12} fill="#1f2f1e">{String(value ?? '')}</text>;
}

/** On a narrow chart, a bar's name on its own line above it, cut short to the phone's width (the tooltip has it whole). */
function BarName({ x, y, value }: LabelProps) {
  const name = String(value ?? '');
  return <text x={num(x)} y={num(y) - 5} fontSize={12} fill="#293f27">{name.length > 46 ? `${name.slice(0, 45)}…` : name}</text>;
}

/** True below Tailwind's `sm` breakpoint (640 px), where the chart puts names above bars. */
function useNarrow() {
  const [narrow, setNarrow] = useState(false);
  useEffect(() => {
    const query = window.matchMedia('(max-width: 639px)');
    const update = () => setNarrow(query.matches);
    update();
    query.addEventListener('change', update);
    return () => query.removeEventListener('change', update);
  }, []);
  return narrow;
}

/**
 * On a wide chart the names sit left of their bars, wrapped by word into 240 px: at 12 px that is
 * about 28 characters a line, give or take the breaks. Each row is tall enough for the longest name.
 */
const wideRowHeight = (names: string[]) => Math.max(30, Math.ceil(Math.max(0, ...names.map((n) => n.length)) / 28) * 14 + 4);

export default function AuditChart({ bars }: { bars: AuditChartBar[] }) {
  const uid = useId().replace(/[^\w-]/g, '');
  const narrow = useNarrow();
  const ceiling = chartCeiling(bars.map((b) => b.percent));
  const ticks = Array.from({ length: ceiling / 20 + 1 }, (_, i) => i * 20);
  const data = bars.map((b) => ({
    key: `${b.parcelId}|${b.speciesId}|${b.scope}|${b.measure}`,
    name: `${b.parcelName} · ${b.commonName} · ${auditScopeLabels[b.scope]}${bars.some((o) => o !== b && o.parcelId === b.parcelId && o.speciesId === b.speciesId && o.scope === b.scope) ? ` (${unitLabel(b.unit)})` : ''}`,
    value: Math.min(b.percent, ceiling),
    state: b.state,
    caption: `${stateSymbols[b.state]} ${formatPercent(b.percent)} ${stateWords[b.state]}`,
    usage: formatUsage(b),
  }));
  const count = (s: TallyState) => bars.filter((b) => b.state === s).length;
  const highest = bars.reduce<AuditChartBar | null>((top, b) => (!top || b.percent > top.percent ? b : top), null);
  const summary = `Bar chart of the share of each limit used, one bar per parcel, species and limit: ${bars.length} ${bars.length === 1 ? 'bar' : 'bars'}, `
    + `${count('over')} over, ${count('reached')} reached, ${count('nearing')} nearing, ${count('within')} within.`
    + (highest ? ` Highest: ${highest.parcelName}, ${highest.commonName}, ${auditScopeLabels[highest.scope]}, ${formatPercent(highest.percent)} ${stateWords[highest.state]}.` : '');

  return (
    <figure className="card mt-4 overflow-hidden" data-testid="audit-chart">
      <figcaption className="font-semibold text-moss-800">Share of each limit used</figcaption>
      <svg width="0" height="0" className="absolute" aria-hidden="true" focusable="false">
        <defs>
          <pattern id={`${uid}-within`} width="6" height="6" patternUnits="userSpaceOnUse"><rect width="6" height="6" fill={stateFills.within.ground} /></pattern>
          <pattern id={`${uid}-nearing`} width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
            <rect width="6" height="6" fill={stateFills.nearing.ground} /><path d="M3 0V6" stroke={stateFills.nearing.ink} strokeWidth="2.5" />
          </pattern>
          {(['reached', 'over'] as const).map((s) => (
            <pattern key={s} id={`${uid}-${s}`} width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">
              <rect width="6" height="6" fill={stateFills[s].ground} /><path d="M3 0V6M0 3H6" stroke={stateFills[s].ink} strokeWidth="1.5" />
            </pattern>
          ))}
        </defs>
      </svg>
      <div role="img" aria-label={summary} style={{ height: data.length * (narrow ? 46 : wideRowHeight(data.map((d) => d.name))) + 60 }} className="mt-2">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart data={data} layout="vertical" margin={{ top: 24, right: narrow ? 96 : 120, bottom: 4, left: 4 }}>
            <CartesianGrid horizontal={false} stroke="#eee7dd" />
            <XAxis type="number" domain={[0, ceiling]} ticks={narrow ? ticks.filter((t) => t % 40 === 0) : ticks} allowDataOverflow tickFormatter={(v: number) => `${v} %`} tick={{ fontSize: 12, fill: '#5c4431' }} />
            {/* On a phone the names go above their bars, so the bars keep the width. */}
            <YAxis type="category" dataKey="name" width={narrow ? 0 : 240} hide={narrow} interval={0} tick={{ fontSize: 12, fill: '#293f27' }} />
            <ReferenceLine x={100} stroke="#86391a" strokeDasharray="5 3" strokeWidth={2} label={{ value: 'limit, 100 %', position: 'top', fill: '#86391a', fontSize: 12 }} />
            <Tooltip cursor={{ fill: '#f8f5f1' }} formatter={(_v, _n, item) => [(item.payload as { usage: string }).usage, 'used']} />
            <Bar dataKey="value" barSize={18} isAnimationActive={false}>
              {data.map((d) => <Cell key={d.key} fill={`url(#${uid}-${d.state})`} stroke={stateFills[d.state].edge} />)}
              <LabelList dataKey="caption" content={BarCaption} />
              {narrow && <LabelList dataKey="name" content={BarName} />}
            </Bar>
          </BarChart>
        </ResponsiveContainer>
      </div>
      <ul className="mt-3 flex flex-wrap gap-x-5 gap-y-1 text-sm" aria-label="Chart legend">
        {tallyStates.map((s) => (
          <li key={s} className="inline-flex items-center gap-2">
            <svg width="28" height="14" aria-hidden="true" focusable="false"><rect x="0.5" y="0.5" width="27" height="13" fill={`url(#${uid}-${s})`} stroke={stateFills[s].edge} /></svg>
            <span><span aria-hidden="true">{stateSymbols[s]} </span>{stateWords[s]}: {statePatterns[s]}</span>
          </li>
        ))}
        <li className="inline-flex items-center gap-2">
          <svg width="28" height="14" aria-hidden="true" focusable="false"><path d="M14 0V14" stroke="#86391a" strokeWidth="2" strokeDasharray="5 3" /></svg>
          dashed line: the limit (100 %)
        </li>
      </ul>
    </figure>
  );
}
