import type { FieldPack } from '../../lib/field/pack';

/** "3 hours", "2 days": how long ago, in the largest whole unit. */
function age(from: Date, to: Date): string {
  const minutes = Math.max(0, Math.floor((to.getTime() - from.getTime()) / 60_000));
  if (minutes < 1) return 'less than a minute';
  const [amount, unit] = minutes < 60 ? [minutes, 'minute'] : minutes < 48 * 60 ? [Math.floor(minutes / 60), 'hour'] : [Math.floor(minutes / 1440), 'day'];
  return `${amount} ${unit}${amount === 1 ? '' : 's'}`;
}

/** The field pack on this phone: whether there is one, how old it is, and the button that gets or refreshes it. */
export default function PackStatus({ pack, now, busy, tiles, maxAgeDays, onGet }: {
  pack: FieldPack | null; now: Date; busy: boolean; tiles: { done: number; of: number } | null; maxAgeDays: number; onGet: () => void;
}) {
  const old = pack !== null && now.getTime() - new Date(pack.asOf).getTime() >= maxAgeDays * 86_400_000;
  return (
    <section className={`card flex flex-col gap-3 sm:flex-row sm:items-center ${old ? 'border-2 border-ember-600' : ''}`} data-testid="pack-status" data-pack={pack ? (old ? 'old' : 'ready') : 'none'}>
      <div className="min-w-0 text-sm sm:flex-1">
        {pack ? (
          <>
            <p className="font-semibold" data-testid="pack-age">Field pack on this phone: {pack.parcels.length} {pack.parcels.length === 1 ? 'parcel' : 'parcels'}, {age(new Date(pack.asOf), now)} old{old ? ' (too old to trust: refresh it)' : ''}.</p>
            {pack.usable > pack.parcels.length && <p className="text-loam-700">It holds the first {pack.parcels.length} of the {pack.usable.toLocaleString('en-US')} parcels you may use, by name.</p>}
            <p className="text-loam-700">With no signal, Tallywood answers from it and keeps your entries on the phone until it can send them.</p>
          </>
        ) : (
          <>
            <p className="font-semibold">No field pack on this phone yet.</p>
            <p className="text-loam-700">Get ready before you lose signal: your parcels, limits, closures and map are saved so the Field works with none.</p>
          </>
        )}
        {tiles && tiles.done < tiles.of && <p className="text-loam-700">Saving the map: {tiles.done} of {tiles.of} tiles.</p>}
      </div>
      <button type="button" className={`${pack ? 'button-quiet' : 'button'} self-start sm:self-auto`} onClick={onGet} disabled={busy}>
        {busy ? 'Getting ready…' : pack ? 'Refresh field pack' : 'Get ready for the field'}
      </button>
    </section>
  );
}
