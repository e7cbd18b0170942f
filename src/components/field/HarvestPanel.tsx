import { useMemo, type ComponentProps } from 'react';
import HarvestForm from './HarvestForm';
import { offlineRecorder, onlineRecorder, type OfflineSpot } from './recorders';

/** Where an entry goes: into an open visit through the server, or into the phone's queue. */
export type RecorderSpec = { offline: false; visitId: string } | { offline: true; spot: OfflineSpot };

/**
 * The harvest form with the recorder it saves through. Loaded only when a clear verdict shows it, so
 * the recorders (and the engine's projection they use) are not part of the Field's first scripts.
 */
export default function HarvestPanel({ spec, ...form }: { spec: RecorderSpec } & Omit<ComponentProps<typeof HarvestForm>, 'recorder'>) {
  const recorder = useMemo(() => (spec.offline ? offlineRecorder(spec.spot) : onlineRecorder(spec.visitId)), [spec]);
  return <HarvestForm recorder={recorder} {...form} />;
}
