import type { Verdict } from '../../lib/field/types';

/**
 * The verdicts' symbols, drawn as SVG shipped with the app (an emoji is a blank box where no emoji
 * font is installed). Each sits in a circle of fixed size that never shrinks, so it stays round
 * when the heading beside it wraps.
 */
const paths: Record<Verdict, string> = {
  clear: 'M6 12.5l4 4 8-9',
  edge: 'M4 12h16M4 12l4-4M4 12l4 4M20 12l-4-4M20 12l-4 4',
  outside: 'M12 6.5a5.5 5.5 0 1 0 0.01 0',
  'no-permit': 'M7 7l10 10M17 7L7 17',
  closed: 'M12 5.5a6.5 6.5 0 1 0 0.01 0M7.4 7.4l9.2 9.2',
};

export default function VerdictIcon({ verdict }: { verdict: Verdict }) {
  return (
    <span aria-hidden="true" className="inline-flex h-12 w-12 shrink-0 items-center justify-center rounded-full border-2 border-current" data-icon={verdict}>
      <svg viewBox="0 0 24 24" width="28" height="28" fill="none" stroke="currentColor" strokeWidth="2.5" strokeLinecap="round" strokeLinejoin="round">
        <path d={paths[verdict]} />
      </svg>
    </span>
  );
}
