import { lazy, Suspense, useEffect, useMemo, useRef, useState } from 'react';
import ParcelMap, { type MapFeature, type ParcelMapProps } from '../map/ParcelMap';
import type { CheckInAnswer } from '../../lib/field/types';
import { offlineCheckIn, packMaxAgeDays, packTiles, type CountedEntry, type FieldPack, type PositionSource } from '../../lib/field/pack';
import { sendJson } from '../api-client';
import type { RecorderSpec } from './HarvestPanel';
import SpeciesTallies from './SpeciesTallies';
import VerdictPanel, { type OfflineNote } from './VerdictPanel';
import { fieldSentMessage, queuedRecords, savedPack, savePack, type QueuedRecord } from './offline-store';

/** Sending what the phone kept is loaded when there is something to send or keep, not with the page. */
const sync = () => import('./sync');
import PackStatus from './PackStatus';
import { useHydrated } from '../useHydrated';

// Not needed for the first verdict, so loaded when a verdict shows them (the service worker keeps them for offline use).
const HarvestPanel = lazy(() => import('./HarvestPanel'));
/** Loaded once the phone holds an entry to list. */
const QueueList = lazy(() => import('./QueueList'));
const ParcelNotes = lazy(() => import('./ParcelNotes'));

type Answer = CheckInAnswer & { visitId: string | null; offline: OfflineNote | null };
type Fix = { at: [number, number]; accuracyM: number; source: PositionSource };

/** A spot tapped on the map is where the person points, good to about this much on a phone's map. */
const tapAccuracyM = 10;
/** How long a check-in waits for the server before the phone decides from its pack. */
const onlineTimeoutMs = 8000;

/**
 * The entries the device counts now: every entry kept on it that the pack it decides with cannot
 * include yet (still waiting, or answered after the pack was made). Refused ones were not recorded.
 */
function countedNow(queue: QueuedRecord[], pack: FieldPack): CountedEntry[] {
  return queue
    .filter((r) => r.counted && r.state !== 'refused' && (r.state === 'waiting' || (r.answeredAt ?? '') > pack.asOf))
    .map((r) => r.counted as CountedEntry);
}

/** The Field screen: check in, the verdict, what remains, and the harvest form. Phone first, and it works with no signal once the pack is on the phone. */
export default function FieldApp({ tiles, parcels, userId }: { tiles: ParcelMapProps['tiles']; parcels: MapFeature[]; userId: string }) {
  const hydrated = useHydrated();
  const [pack, setPack] = useState<FieldPack | null>(null);
  const [packBusy, setPackBusy] = useState(false);
  const [tileProgress, setTileProgress] = useState<{ done: number; of: number } | null>(null);
  const [queue, setQueue] = useState<QueuedRecord[]>([]);
  const [answer, setAnswer] = useState<Answer | null>(null);
  const [fix, setFix] = useState<Fix | null>(null);
  const [tapped, setTapped] = useState<[number, number] | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [now, setNow] = useState(() => new Date());
  const verdictRef = useRef<HTMLElement>(null);

  const reloadQueue = async () => {
    const records = await queuedRecords(userId);
    setQueue(records);
    return records;
  };

  async function getPack({ told }: { told: boolean }) {
    setPackBusy(true);
    const result = await sendJson('GET', '/api/field/pack', undefined, { timeoutMs: 30_000 });
    setPackBusy(false);
    if (!result.ok) {
      if (told) setProblem(result.error.code === 'offline' ? 'No signal to get the field pack; try again where you have a connection.' : result.error.message);
      return;
    }
    const fresh = result.data as FieldPack;
    await savePack(userId, fresh);
    setPack(fresh);
    if (told) setNotice(`Ready for the field: ${fresh.parcels.length} ${fresh.parcels.length === 1 ? 'parcel' : 'parcels'} saved on this phone.`);
    void saveTiles(fresh);
  }

  /** Loads the pack's map tiles once through the service worker, which keeps them for offline use. */
  async function saveTiles(fresh: FieldPack) {
    if (!('serviceWorker' in navigator)) return;
    // On the first visit the worker may still be starting: wait for it to take the page, briefly.
    await navigator.serviceWorker.ready;
    if (!navigator.serviceWorker.controller) {
      await new Promise((resolve) => {
        navigator.serviceWorker.addEventListener('controllerchange', resolve, { once: true });
        setTimeout(resolve, 5000);
      });
    }
    if (!navigator.serviceWorker.controller) return;
    const wanted = [
      ...(tiles.baseLayerUrl ? [tiles.baseLayerUrl] : []),
      ...packTiles(fresh).map((t) => tiles.url.replace('{z}', String(t.z)).replace('{x}', String(t.x)).replace('{y}', String(t.y)).replace('{s}', 'a')),
    ];
    let done = 0;
    setTileProgress({ done, of: wanted.length });
    for (let i = 0; i < wanted.length; i += 6) {
      await Promise.all(wanted.slice(i, i + 6).map((url) => fetch(url).catch(() => null)));
      done = Math.min(wanted.length, i + 6);
      setTileProgress({ done, of: wanted.length });
    }
  }

  async function sendNow({ told }: { told: boolean }) {
    if (!told && !(await queuedRecords(userId)).some((r) => r.state === 'waiting')) return 0;
    const outcome = await (await sync()).sendWaiting(userId);
    await reloadQueue();
    const answered = outcome.sent + outcome.flagged + outcome.refused;
    if (told && outcome.problem) setProblem(outcome.problem);
    else if (answered > 0) {
      const parts = [`${outcome.sent} recorded`, outcome.flagged > 0 ? `${outcome.flagged} flagged` : '', outcome.refused > 0 ? `${outcome.refused} not recorded (see below)` : ''].filter(Boolean);
      setNotice(`Sent what this phone kept: ${parts.join(', ')}.`);
    }
    return answered;
  }

  // On opening: the saved pack and queue; then, with signal, send what waits and refresh the pack.
  useEffect(() => {
    let live = true;
    const online = async () => {
      const answered = await sendNow({ told: false });
      if (live && (answered > 0 || navigator.onLine)) await getPack({ told: false });
    };
    void (async () => {
      const saved = await savedPack(userId);
      if (!live) return;
      setPack(saved);
      await reloadQueue();
      if (navigator.onLine) await online();
    })();
    const onOnline = () => void online();
    window.addEventListener('online', onOnline);
    // The service worker sent what waited (background sync): show each record's new state.
    const onWorkerMessage = (event: MessageEvent) => {
      if ((event.data as { type?: string } | null)?.type === fieldSentMessage) void reloadQueue();
    };
    navigator.serviceWorker?.addEventListener('message', onWorkerMessage);
    const tick = setInterval(() => setNow(new Date()), 60_000);
    return () => {
      live = false;
      window.removeEventListener('online', onOnline);
      navigator.serviceWorker?.removeEventListener('message', onWorkerMessage);
      clearInterval(tick);
    };
  }, [userId]);

  useEffect(() => {
    if (answer) verdictRef.current?.scrollIntoView({ behavior: 'smooth', block: 'start' });
  }, [answer]);

  async function decideOffline(next: Fix, records: QueuedRecord[]) {
    if (!pack) {
      setAnswer(null);
      return setProblem('No connection, and no field pack on this phone yet. Get ready for the field while you have signal; then Tallywood answers here with none.');
    }
    const at = new Date();
    const decided = offlineCheckIn(pack, { position: next.at, accuracyM: next.accuracyM, at, counted: countedNow(records, pack) });
    const { caveats, ...rest } = decided;
    setProblem(null);
    setAnswer({ ...rest, visitId: null, offline: { asOf: pack.asOf, caveats } });
  }

  async function checkIn(next: Fix) {
    setFix(next);
    setTapped(null);
    setBusy(true);
    setNotice(null);
    const body = { longitude: next.at[0], latitude: next.at[1], accuracyM: next.accuracyM, source: next.source };
    const result = navigator.onLine ? await sendJson('POST', '/api/check-ins', body, { timeoutMs: onlineTimeoutMs }) : null;
    if (result?.ok) {
      setProblem(null);
      setAnswer({ ...(result.data as CheckInAnswer & { visitId: string | null }), offline: null });
    } else if (!result || result.error.code === 'offline') {
      if (pack) {
        await (await sync()).keepForSending(userId, { kind: 'check-in', idempotencyKey: crypto.randomUUID(), recordedAt: new Date().toISOString(), position: { longitude: body.longitude, latitude: body.latitude, accuracyM: body.accuracyM, source: body.source }, packAsOf: pack.asOf, state: 'waiting', summary: 'Check-in' });
      }
      await decideOffline(next, await reloadQueue());
    } else {
      setProblem(result.error.message);
    }
    setBusy(false);
  }

  function useMyLocation() {
    if (!navigator.geolocation) return setProblem('This browser cannot share its location; tap your spot on the map instead.');
    setBusy(true);
    navigator.geolocation.getCurrentPosition(
      (p) => void checkIn({ at: [p.coords.longitude, p.coords.latitude], accuracyM: p.coords.accuracy, source: 'gps' }),
      (e) => {
        setBusy(false);
        setProblem(e.code === e.PERMISSION_DENIED ? 'Location is blocked for this site; allow it, or tap your spot on the map.' : 'No position fix yet; step into the open or tap your spot on the map.');
      },
      { enableHighAccuracy: true, timeout: 20_000, maximumAge: 0 },
    );
  }

  async function checkOut() {
    if (!answer?.visitId) return;
    const result = await sendJson('POST', `/api/visits/${answer.visitId}/check-out`, {});
    if (!result.ok) return setProblem(result.error.message);
    setNotice(`Checked out of ${answer.parcel?.name ?? 'the parcel'}. What you recorded is in My ledger.`);
    setAnswer(null);
  }

  async function saved(words: string) {
    const records = await reloadQueue();
    if (!fix) return;
    if (answer?.offline) {
      setNotice(`Kept on this phone: ${words}. It is sent when you have signal.`);
      await decideOffline(fix, records);
    } else {
      setNotice(`Saved: ${words}. It is in My ledger.`);
      await checkIn(fix);
      setNotice(`Saved: ${words}. It is in My ledger.`);
    }
  }

  const recorder = useMemo((): RecorderSpec | null => {
    if (!answer || answer.verdict !== 'clear' || !answer.parcel || !fix) return null;
    if (!answer.offline) return answer.visitId ? { offline: false, visitId: answer.visitId } : null;
    if (!pack) return null;
    return {
      offline: true,
      spot: {
        userId, pack, parcelId: answer.parcel.id, permitId: answer.permitId,
        position: { longitude: fix.at[0], latitude: fix.at[1], accuracyM: fix.accuracyM, source: fix.source },
        counted: () => countedNow(queue, pack),
      },
    };
  }, [answer, pack, fix, queue, userId]);

  // The map: the pack's parcels and their no-harvest zones when the phone has them, else the page's parcels.
  const features = useMemo<MapFeature[]>(() => {
    if (!pack) return parcels;
    return [
      ...pack.parcels.map((p) => ({ id: p.id, name: p.name, geometry: p.boundary, kind: 'parcel' as const })),
      ...pack.parcels.flatMap((p) => p.zones.map((z) => ({ id: z.id, name: `No-harvest zone: ${z.name}`, geometry: z.boundary, kind: 'zone' as const, status: `on ${p.name}` }))),
    ];
  }, [pack, parcels]);
  const packParcel = answer?.parcel ? pack?.parcels.find((p) => p.id === answer.parcel?.id) : undefined;
  const waiting = queue.filter((r) => r.state === 'waiting' && r.kind === 'entry').length;

  return (
    <div className="lg:grid lg:grid-cols-[minmax(0,1fr)_26rem] lg:items-start lg:gap-6" data-hydrated={hydrated ? 'true' : undefined}>
      <div className="min-w-0 space-y-4">
        <PackStatus pack={pack} now={now} busy={packBusy} tiles={tileProgress} maxAgeDays={packMaxAgeDays} onGet={() => void getPack({ told: true })} />
        <div className="flex flex-wrap gap-3">
          <button type="button" className="button text-lg" onClick={useMyLocation} disabled={busy}>{busy ? 'Checking…' : 'Use my location'}</button>
          {answer?.visitId && <button type="button" className="button-quiet" onClick={checkOut}>Check out</button>}
        </div>
        <p className="text-sm text-loam-700">Or tap your spot on the map.</p>
        {problem && <p role="alert" className="field-error text-base">{problem}</p>}
        {notice && <p role="status" className="rounded-md border border-moss-600 bg-moss-50 p-3 text-moss-900" data-testid="field-notice">{notice}</p>}
        {answer && (
          <>
            <VerdictPanel ref={verdictRef} answer={answer} offline={answer.offline} />
            <Suspense fallback={<p className="card text-sm text-loam-700">Loading the harvest form…</p>}>
              {recorder && <HarvestPanel key={`${answer.visitId ?? 'offline'}|${answer.parcel?.id}`} spec={recorder} species={answer.species} onSaved={(words) => void saved(words)} />}
            </Suspense>
            {answer.verdict === 'clear' && <SpeciesTallies species={answer.species} />}
            <Suspense fallback={null}>
              {packParcel && <ParcelNotes parcel={packParcel} terms={pack?.terms[packParcel.id] ?? null} localDate={answer.localDate} />}
            </Suspense>
          </>
        )}
      </div>
      {/* On a wide screen the map stays beside the verdict; on a phone it follows it. */}
      <div className="mt-4 space-y-4 lg:sticky lg:top-4 lg:mt-0">
        {tapped && (
          <div role="alertdialog" aria-labelledby="tap-question" className="card border-2 border-moss-600" data-testid="tap-confirm">
            <p id="tap-question" className="font-semibold">{fix?.source === 'gps' ? 'Check in at the spot you tapped instead of your GPS fix?' : 'Check in at the spot you tapped?'}</p>
            <p className="mt-1 text-sm text-loam-700">It is recorded as a tapped spot, not as a position from your phone.</p>
            <div className="mt-3 flex flex-wrap gap-2">
              <button type="button" className="button" onClick={() => void checkIn({ at: tapped, accuracyM: tapAccuracyM, source: 'tap' })}>Check in here</button>
              <button type="button" className="button-quiet" onClick={() => setTapped(null)}>Cancel</button>
            </div>
          </div>
        )}
        <ParcelMap
          tiles={tiles}
          features={features}
          position={fix ?? undefined}
          // Once there is a fix, the map shows the few hundred metres around it.
          fitTo={fix ? [[fix.at[0] - 0.004, fix.at[1] - 0.003], [fix.at[0] + 0.004, fix.at[1] + 0.003]] : 'features'}
          height="20rem"
          testId="field-map"
          onPick={(at) => setTapped(at)}
        />
        {queue.some((r) => r.kind === 'entry') && (
          <Suspense fallback={null}>
            <QueueList queue={queue} waiting={waiting} onSend={() => void sendNow({ told: true })} />
          </Suspense>
        )}
      </div>
    </div>
  );
}
