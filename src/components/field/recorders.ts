import { AppError } from '../../lib/errors';
import { localDateAt, projectEntry } from '../../lib/field';
import { offlineUsage, type CountedEntry, type FieldPack, type PositionSource } from '../../lib/field/pack';
import { formatQuantities } from '../../lib/tally-words';
import { sendJson, type ApiResult } from '../api-client';
import type { HarvestDraft, Recorder } from './HarvestForm';
import { keepForSending } from './sync';

const asBody = ({ photo: _photo, ...draft }: HarvestDraft) => draft;

/** Entries into an open visit, through the server. */
export function onlineRecorder(visitId: string): Recorder {
  return {
    offline: false,
    preview: (draft) => sendJson('POST', '/api/harvest-entries/preview', { ...asBody(draft), visitId }),
    async save(draft) {
      let photoUploadId: string | undefined;
      if (draft.photo) {
        const form = new FormData();
        form.set('photo', draft.photo);
        const response = await fetch('/api/photos', { method: 'POST', body: form }).catch(() => null);
        const data = await response?.json().catch(() => null);
        if (!response?.ok) return { ok: false, status: response?.status ?? 0, error: { code: 'photo', field: 'photo', message: data?.error?.message ?? 'The photo could not be uploaded.' } };
        photoUploadId = data.uploadId;
      }
      return sendJson('POST', '/api/harvest-entries', { ...asBody(draft), visitId, photoUploadId });
    },
  };
}

export type OfflineSpot = {
  userId: string;
  pack: FieldPack;
  parcelId: string;
  permitId: string | null;
  position: { longitude: number; latitude: number; accuracyM: number; source: PositionSource };
  /** The entries the device counts now (the pack's own plus those made since). */
  counted: () => CountedEntry[];
};

const failure = (error: unknown): ApiResult => {
  if (error instanceof AppError) return { ok: false, status: error.status, error: { code: error.code, message: error.message, field: error.field } };
  throw error;
};

/**
 * Entries kept on the phone: previewed by the same engine against the pack's tallies plus what was
 * taken since, and saved into the queue that is sent when there is signal.
 */
export function offlineRecorder(spot: OfflineSpot): Recorder {
  const parcel = spot.pack.parcels.find((p) => p.id === spot.parcelId);
  const permit = parcel?.permits.find((p) => p.id === spot.permitId) ?? null;
  const project = (draft: HarvestDraft, at: Date) => {
    if (!parcel) throw new AppError(409, 'no-parcel', 'This parcel is not in your field pack; refresh it when you have signal.');
    const allowance = parcel.allowances.find((a) => a.speciesId === draft.speciesId);
    if (!allowance) throw new AppError(400, 'invalid-input', 'That species is not allowed on this parcel; choose one from the list.', 'speciesId');
    const localDate = localDateAt(at, parcel.timeZone);
    const usage = offlineUsage(spot.pack, parcel.id, localDate, spot.counted());
    const context = { forager: spot.pack.forager, permit, thresholdPercent: parcel.nearingThresholdPercent };
    return { allowance, localDate, projection: projectEntry(allowance, usage, draft.quantities, context) };
  };
  return {
    offline: true,
    async preview(draft) {
      try {
        const { projection } = project(draft, new Date());
        return { ok: true, data: projection };
      } catch (error) {
        return failure(error);
      }
    },
    async save(draft) {
      const at = new Date();
      try {
        const { allowance, localDate, projection } = project(draft, at);
        if (projection.wouldBreach && !draft.acknowledgeOver) {
          return { ok: false, status: 409, error: { code: 'would-go-over', field: 'quantities', message: 'This entry would take a limit over. Take less, or confirm that you are going over; the landowner is told.' } };
        }
        await keepForSending(spot.userId, {
          kind: 'entry',
          idempotencyKey: draft.idempotencyKey,
          recordedAt: at.toISOString(),
          position: spot.position,
          parcelId: spot.parcelId,
          speciesId: draft.speciesId,
          method: draft.method,
          quantities: draft.quantities,
          acknowledgeOver: draft.acknowledgeOver,
          packAsOf: spot.pack.asOf,
          state: 'waiting',
          counted: { parcelId: spot.parcelId, speciesId: draft.speciesId, localDate, clubId: permit?.holderClubId ?? null, bases: projection.bases },
          summary: `${allowance.commonName}, ${formatQuantities(draft.quantities)} on ${parcel?.name ?? 'a parcel'}`,
        });
        return { ok: true, data: { queued: true } };
      } catch (error) {
        return failure(error);
      }
    },
  };
}
