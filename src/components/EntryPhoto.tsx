/**
 * A harvest entry's photo, opened where the entry is read: My ledger, a parcel's Tallies, the club
 * audit. The server picks the bytes (`/api/photos/{id}`, findPhotoForViewer): the forager who took it
 * gets the original, anyone else who may see the entry the copy without its metadata. `yours` says
 * which of the two this viewer gets, so the caption tells them.
 */
export default function EntryPhoto({ uploadId, yours, subject }: {
  uploadId: string;
  /** True when the viewer took the photo, as the server decided it (AuditEntry.photo, the ledger's own rows). */
  yours: boolean;
  /** What it shows, for the alternative text: "Oyster mushroom, Dec 3, 2026". */
  subject: string;
}) {
  const href = `/api/photos/${uploadId}`;
  return (
    <figure className="flex flex-wrap items-start gap-3" data-testid="entry-photo" data-copy={yours ? 'original' : 'shared'}>
      <a href={href} target="_blank" rel="noopener" className="block shrink-0">
        <img src={href} alt={`${yours ? 'Your photo' : 'The forager’s photo'} of ${subject}`} loading="lazy" className="h-28 w-28 rounded-md border border-loam-200 object-cover" />
      </a>
      <figcaption className="min-w-0 flex-1 text-xs text-loam-700">
        <a href={href} target="_blank" rel="noopener">Open the photo</a>
        {yours
          ? ' (your original, with any location your camera saved). The landowner, and a club steward for an entry under the club’s permit, see a copy without it.'
          : ' (a copy with the location and camera details removed; only the forager who took it sees the original).'}
      </figcaption>
    </figure>
  );
}
