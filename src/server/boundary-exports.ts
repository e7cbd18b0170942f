import type { Executor } from '../db/client';
import { findParcelExportForOwner, listUsableParcelExports } from '../db/exports.queries';
import { exportContentTypes, exportFile, exportFileName, exportFormats, type ExportFormat } from '../lib/boundary-exports';
import { notFound } from '../lib/errors';
import { localDateAt } from '../lib/field';
import { packMaxParcels } from '../lib/field/pack';
import type { Forager } from '../lib/field/types';

export type ExportedFile = { body: string; contentType: string; fileName: string };

/** The format named by a route's extension; another extension names no file, so a 404. */
export function exportFormatParam(value: string | undefined): ExportFormat {
  const format = exportFormats.find((f) => f === value?.toLowerCase());
  if (!format) throw notFound(`A “.${value ?? ''}” download`);
  return format;
}

const safetyLine = 'Identification is your responsibility; local law and the landowner’s terms come first.';

/** One of a landowner's parcels with its no-harvest zones; null when it is not theirs. */
export async function exportParcelForOwner(db: Executor, { parcelId, ownerId, format }: { parcelId: string; ownerId: string; format: ExportFormat }): Promise<ExportedFile | null> {
  const parcel = await findParcelExportForOwner(db, { parcelId, ownerId });
  if (!parcel) return null;
  const title = { name: parcel.name, description: `The boundary of ${parcel.name} and its no-harvest zones, from Tallywood.` };
  return { body: exportFile([parcel], format, title), contentType: exportContentTypes[format], fileName: exportFileName(parcel.name, format) };
}

/**
 * Every parcel the forager may use under their own or a club permit (the field pack's parcels), with
 * the zones, dated on the first parcel's own calendar as the ledger's CSV is.
 */
export async function exportUsableParcels(db: Executor, { forager, format, now = new Date() }: { forager: Forager; format: ExportFormat; now?: Date }): Promise<ExportedFile> {
  const parcels = await listUsableParcelExports(db, { forager, limit: packMaxParcels });
  const title = {
    name: 'Parcels I may use',
    description: `The boundaries and no-harvest zones of the parcels you hold a permit on, from Tallywood. A permit's dates, fee, terms and the parcel's closures still apply: check in on the Field. ${safetyLine}`,
  };
  const first = parcels[0];
  const base = first ? `tallywood-parcels-${localDateAt(now, first.timeZone)}` : 'tallywood-parcels';
  return { body: exportFile(parcels, format, title), contentType: exportContentTypes[format], fileName: exportFileName(base, format) };
}

/** The file as a download (RFC 6266: an ASCII file name needs no filename* parameter). Private: never kept by a proxy. */
export function downloadResponse(file: ExportedFile): Response {
  return new Response(file.body, {
    headers: {
      'content-type': file.contentType,
      'content-disposition': `attachment; filename="${file.fileName}"`,
      'cache-control': 'private, no-store',
    },
  });
}
