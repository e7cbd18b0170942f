import { useState } from 'react';
import ParcelMap, { type MapFeature, type ParcelMapProps } from '../map/ParcelMap';
import type { CheckInAnswer } from '../../lib/field/types';
import { sendJson } from '../api-client';
import HarvestForm from './HarvestForm';
import SpeciesTallies from './SpeciesTallies';
import VerdictPanel from './VerdictPanel';

type Answer = CheckInAnswer & { visitId: string | null };
/** A position chosen by tapping the map has no device error; we call it a 5 m fix. */
const tapAccuracyM = 5;

/** The Field screen: check in, the verdict, what remains, and the harvest form. Phone first. */
export default function FieldApp({ tiles, parcels }: { tiles: ParcelMapProps['tiles']; parcels: MapFeature[] }) {
  const [answer, setAnswer] = useState<Answer | null>(null);
  const [fix, setFix] = useState<{ at: [number, number]; accuracyM: number } | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  async function checkIn(at: [number, number], accuracyM: number) {
    setFix({ at, accuracyM });
    setBusy(true);
    const result = await sendJson('POST', '/api/check-ins', { longitude: at[0], latitude: at[1], accuracyM });
    setBusy(false);
    if (!result.ok) return setProblem(result.error.message);
    setProblem(null);
    setAnswer(result.data as Answer);
  }

  function useMyLocation() {
    if (!navigator.geolocation) return setProblem('This browser cannot share its location; tap your spot on the map instead.');
    setBusy(true);
    navigator.geolocation.getCurrentPosition(
      (p) => void checkIn([p.coords.longitude, p.coords.latitude], p.coords.accuracy),
      (e) => { setBusy(false); setProblem(e.code === e.PERMISSION_DENIED ? 'Location is blocked for this site; allow it, or tap your spot on the map.' : 'No position fix yet; step into the open or tap your spot on the map.'); },
      { enableHighAccuracy: true, timeout: 20_000, maximumAge: 0 },
    );
  }

  async function checkOut() {
    if (!answer?.visitId) return;
    const result = await sendJson('POST', `/api/visits/${answer.visitId}/check-out`, {});
    if (!result.ok) return setProblem(result.error.message);
    setAnswer(null);
  }

  const markers = fix ? [{ at: fix.at, label: `You, within ${Math.round(fix.accuracyM)} m`, tone: 'info' as const }] : [];
  return (
    <div className="space-y-4" data-hydrated="true">
      <div className="flex flex-wrap gap-3">
        <button type="button" className="button text-lg" onClick={useMyLocation} disabled={busy}>{busy ? 'Checking…' : 'Use my location'}</button>
        {answer?.visitId && <button type="button" className="button-quiet" onClick={checkOut}>Check out</button>}
      </div>
      <p className="text-sm text-loam-700">Or tap your spot on the map (taken as a {tapAccuracyM} m fix).</p>
      {problem && <p role="alert" className="field-error text-base">{problem}</p>}
      <ParcelMap
        tiles={tiles}
        features={parcels}
        markers={markers}
        // Once there is a fix, the map shows the few hundred metres around it.
        fitTo={fix ? [[fix.at[0] - 0.004, fix.at[1] - 0.003], [fix.at[0] + 0.004, fix.at[1] + 0.003]] : 'features'}
        height="20rem"
        testId="field-map"
        onPick={(at) => void checkIn(at, tapAccuracyM)}
      />
      {answer && (
        <>
          <VerdictPanel answer={answer} />
          {answer.verdict === 'clear' && answer.visitId && (
            <>
              <SpeciesTallies species={answer.species} />
              <HarvestForm key={answer.visitId} visitId={answer.visitId} species={answer.species} onSaved={() => fix && void checkIn(fix.at, fix.accuracyM)} />
            </>
          )}
        </>
      )}
    </div>
  );
}
