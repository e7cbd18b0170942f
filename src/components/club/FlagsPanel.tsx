import { useCallback, useEffect, useId, useRef, useState } from 'react';
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import type { z } from 'zod';
import type { LimitScope } from '../../lib/field/types';
import type { FlagNoteView, FlagView } from '../../db/flags.queries';
import { flagNoteSchema } from '../../lib/clubs.schemas';
import { formatDate, formatInstantIn } from '../../lib/format';
import { formatQuantities } from '../../lib/tally-words';
import { flagKindMeanings, flagTitleWord } from '../../lib/flag-words';
import { postJson, sendJson } from '../api-client';
import { flagScopeLabels, formatUsage, isTallyState, stateSymbols, stateTones, stateWords } from './audit-view';

export type FlagsPanelProps = {
  /** The club's or the parcel's flags endpoint, answering `{ flags }` newest first. */
  flagsUrl: string;
};

type Input = z.input<typeof flagNoteSchema>;
type Output = z.output<typeof flagNoteSchema>;
type Load = { status: 'loading' } | { status: 'error'; message: string } | { status: 'ready'; flags: FlagView[] };

const scopeLabel = (scope: string) => flagScopeLabels[scope as LimitScope] ?? scope;

/** Breaches, nearing tallies and entries flagged on sync (over on sync, off permit), each with its follow-up notes and a form to add one. */
export default function FlagsPanel({ flagsUrl }: FlagsPanelProps) {
  const [load, setLoad] = useState<Load>({ status: 'loading' });
  const [openOnly, setOpenOnly] = useState(true);
  const latest = useRef(0);
  const [hydrated, setHydrated] = useState(false);
  useEffect(() => setHydrated(true), []);

  const refresh = useCallback(async () => {
    const ticket = ++latest.current;
    const result = await sendJson('GET', flagsUrl);
    if (ticket !== latest.current) return;
    setLoad(result.ok ? { status: 'ready', flags: (result.data as { flags: FlagView[] }).flags } : { status: 'error', message: result.error.message });
  }, [flagsUrl]);
  useEffect(() => { void refresh(); }, [refresh]);

  const flags = load.status === 'ready' ? load.flags : [];
  const listed = openOnly ? flags.filter((f) => !f.handled) : flags;
  const openCount = flags.filter((f) => !f.handled).length;

  return (
    <div data-testid="flags-panel" data-hydrated={hydrated ? 'true' : undefined} data-status={load.status}>
      <div role="group" aria-label="Which flags to list" className="flex flex-wrap gap-2">
        <button type="button" className="button-quiet" aria-pressed={openOnly} onClick={() => setOpenOnly(true)}>Open only</button>
        <button type="button" className="button-quiet" aria-pressed={!openOnly} onClick={() => setOpenOnly(false)}>All</button>
      </div>
      {load.status === 'loading' && <p className="mt-3 text-loam-700" aria-live="polite">Loading flags…</p>}
      {load.status === 'error' && <p role="alert" className="field-error mt-3">{load.message}</p>}
      {load.status === 'ready' && (
        <>
          <p className="mt-3 text-sm text-loam-700" aria-live="polite" data-testid="flags-count">
            {openCount} open of {flags.length} {flags.length === 1 ? 'flag' : 'flags'}.
          </p>
          {listed.length === 0 ? (
            <p className="card mt-3">{flags.length === 0 ? 'No flags yet: no entry has taken a tally to nearing or over.' : 'No open flags: every flag has been handled.'}</p>
          ) : (
            <ul className="mt-3 space-y-4">
              {listed.map((flag) => <FlagItem key={flag.id} flag={flag} onRecorded={refresh} />)}
            </ul>
          )}
        </>
      )}
    </div>
  );
}

function FlagItem({ flag, onRecorded }: { flag: FlagView; onRecorded: () => Promise<void> }) {
  const id = useId();
  const worst = isTallyState(flag.worstState) ? flag.worstState : null;
  return (
    <li className={`card ${flag.kind !== 'nearing' && !flag.handled ? 'border-2 border-ember-600' : ''}`} data-flag={flag.id} data-kind={flag.kind} data-handled={flag.handled ? 'true' : 'false'}>
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <h3 id={`${id}-title`} className="text-base font-semibold">
          {flagTitleWord(flag.kind, flag.worstState)}: {flag.commonName} on {flag.parcelName}
        </h3>
        <span className={`pill ${flag.handled ? 'border-moss-400 text-moss-800' : 'border-2 border-ember-600 text-ember-700'}`} data-status={flag.handled ? 'handled' : 'open'}>
          <span aria-hidden="true">{flag.handled ? '✓ ' : '! '}</span>{flag.handled ? 'handled' : 'open'}
        </span>
      </div>
      {flag.kind !== 'breach' && flag.kind !== 'nearing' && (
        <p className="mt-1 text-sm text-loam-800" data-testid="flag-meaning">{flagKindMeanings[flag.kind]}</p>
      )}
      {flag.kind === 'off-permit' && flag.message && <p className="mt-1 text-sm" data-testid="flag-message">What the forager's phone was told: “{flag.message.replace(/^Off permit: /, '')}”</p>}
      <dl className="mt-2 grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1 text-sm">
        <dt className="font-semibold">Worst state</dt>
        <dd>{worst ? <span className={`pill ${stateTones[worst]}`}><span aria-hidden="true">{stateSymbols[worst]} </span>{stateWords[worst]}</span> : flag.worstState}</dd>
        <dt className="font-semibold">Forager</dt>
        <dd>{flag.foragerName}</dd>
        <dt className="font-semibold">Entry</dt>
        <dd>{formatDate(flag.entry.countedOn)}, {formatQuantities(flag.entry.quantities)}</dd>
        <dt className="font-semibold">Limits</dt>
        <dd>
          <ul>
            {flag.scopes.flatMap((scope) => {
              const tallies = flag.tallies.filter((t) => t.scope === scope);
              if (tallies.length === 0) return [<li key={scope} data-scope={scope}>{scopeLabel(scope)}</li>];
              return tallies.map((tally) => {
                const state = isTallyState(tally.state) ? tally.state : null;
                return (
                  <li key={`${scope}|${tally.unit}`} data-scope={scope}>
                    {scopeLabel(scope)}: {formatUsage(tally)}{state && <>, <span aria-hidden="true">{stateSymbols[state]} </span>{stateWords[state]}</>}
                  </li>
                );
              });
            })}
          </ul>
        </dd>
        <dt className="font-semibold">Raised</dt>
        <dd><time dateTime={flag.createdAt}>{formatInstantIn(flag.createdAt, flag.timeZone)}</time></dd>
      </dl>
      <NoteHistory notes={flag.notes} timeZone={flag.timeZone} />
      <FollowUpForm flag={flag} onRecorded={onRecorded} />
    </li>
  );
}

/** Each note, and what it did: the newest note decides whether the flag is handled. */
function NoteHistory({ notes, timeZone }: { notes: FlagNoteView[]; timeZone: string }) {
  if (notes.length === 0) return <p className="mt-3 text-sm text-loam-700">No follow-up yet.</p>;
  let handled = false;
  const told = notes.map((n) => {
    const effect = n.handled && !handled ? 'marked handled' : !n.handled && handled ? 'reopened' : null;
    handled = n.handled;
    return { ...n, effect };
  });
  return (
    <div className="mt-3">
      <h4 className="text-sm font-semibold">Follow-up</h4>
      <ol className="mt-1 space-y-2 border-l-2 border-loam-200 pl-3 text-sm">
        {told.map((n) => (
          <li key={n.id} data-note={n.id}>
            <p className="text-xs text-loam-700">
              {n.authorName}, <time dateTime={n.createdAt}>{formatInstantIn(n.createdAt, timeZone)}</time>
              {n.effect && <> — <strong>{n.effect}</strong></>}
            </p>
            <p className="whitespace-pre-line">{n.note}</p>
          </li>
        ))}
      </ol>
    </div>
  );
}

function FollowUpForm({ flag, onRecorded }: { flag: FlagView; onRecorded: () => Promise<void> }) {
  const id = useId();
  const { register, handleSubmit, setError, reset, formState } = useForm<Input, unknown, Output>({
    resolver: zodResolver(flagNoteSchema),
    // A note leaves a handled flag handled unless the box is cleared.
    defaultValues: { note: '', handled: flag.handled, sendToMember: false },
  });
  const { errors, isSubmitting } = formState;
  const [told, setTold] = useState('');

  const onSubmit = handleSubmit(async (input) => {
    setTold('');
    const result = await postJson(`/api/flags/${flag.id}/notes`, input);
    if (!result.ok) {
      setError(result.error.field === 'note' ? 'note' : 'root', { message: result.error.message });
      return;
    }
    const { sentTo } = result.data as { sentTo: string | null };
    setTold(
      input.sendToMember
        ? sentTo ? `Note recorded and e-mailed to ${sentTo}.` : `Note recorded, but the e-mail to ${flag.foragerName} could not be sent; try again later or tell them yourself.`
        : 'Note recorded.',
    );
    reset({ note: '', handled: input.handled, sendToMember: false });
    await onRecorded();
  });

  return (
    <form onSubmit={onSubmit} noValidate className="mt-4 space-y-3 border-t border-loam-100 pt-3" data-testid="flag-follow-up">
      {errors.root && <p role="alert" className="field-error">{errors.root.message}</p>}
      <div>
        <label htmlFor={`${id}-note`} className="field-label">Follow-up note</label>
        <textarea
          id={`${id}-note`} rows={3} className="field-input" aria-invalid={errors.note ? 'true' : 'false'}
          aria-describedby={errors.note ? `${id}-note-error` : undefined} {...register('note')}
        />
        {errors.note && <p id={`${id}-note-error`} role="alert" className="field-error">{errors.note.message}</p>}
      </div>
      <div>
        <label className="flex items-center gap-2 text-sm font-medium">
          <input type="checkbox" className="h-4 w-4 accent-moss-600" aria-describedby={`${id}-handled-help`} {...register('handled')} />
          Mark as handled
        </label>
        <p id={`${id}-handled-help`} className="mt-1 text-xs text-loam-600">
          {flag.handled ? 'Clear the box to reopen this flag.' : 'Leave it clear while more needs doing.'}
        </p>
      </div>
      <div>
        <label className="flex items-center gap-2 text-sm font-medium">
          <input type="checkbox" className="h-4 w-4 accent-moss-600" aria-describedby={`${id}-send-help`} {...register('sendToMember')} />
          Also send this note to {flag.foragerName}
        </label>
        <p id={`${id}-send-help`} className="mt-1 text-xs text-loam-600">
          They get it by e-mail with the flag's facts: species, parcel, the day it counts on and how much over.
        </p>
      </div>
      <button type="submit" className="button" disabled={isSubmitting}>{isSubmitting ? 'Saving…' : 'Record follow-up'}</button>
      <p className="text-sm text-moss-800" role="status" data-testid="follow-up-status">{told}</p>
    </form>
  );
}
