import { pgEnum } from 'drizzle-orm/pg-core';

/** Names from GLOSSARY.md; the TypeScript unions in src/lib/domain.ts list the same values. */
export const roleEnum = pgEnum('role', ['forager', 'landowner', 'admin']);
export const clubRoleEnum = pgEnum('club_role', ['member', 'steward']);
export const membershipStateEnum = pgEnum('membership_state', ['invited', 'active', 'left', 'removed']);
export const parcelStatusEnum = pgEnum('parcel_status', ['draft', 'listed', 'archived']);
export const hazardKindEnum = pgEnum('hazard_kind', ['hunting', 'terrain', 'ticks', 'water', 'wildlife', 'other']);
export const speciesKindEnum = pgEnum('species_kind', ['mushroom', 'leaf', 'shoot', 'root', 'flower', 'fruit', 'nut', 'bark']);
export const methodEnum = pgEnum('method', ['cut', 'pick', 'dig', 'strip', 'gather-fallen']);
export const unitEnum = pgEnum('unit', [
  'g', 'kg', 'oz', 'lb',
  'mL', 'L', 'us-cup', 'us-pint', 'us-quart', 'us-gallon',
  'stem', 'bulb', 'fruiting-body', 'plant',
  'us-dry-pint', 'us-dry-quart',
]);
/** What a unit measures (src/lib/units.ts): stems, bulbs, fruiting bodies and plants are each their own count. */
export const measureEnum = pgEnum('measure', ['mass', 'volume', 'stems', 'bulbs', 'fruiting-bodies', 'plants']);
export const limitScopeEnum = pgEnum('limit_scope', ['visit', 'day', 'season', 'parcel-season', 'club-season']);
export const permitStateEnum = pgEnum('permit_state', ['requested', 'approved', 'active', 'expired', 'revoked', 'declined']);
export const verdictEnum = pgEnum('verdict', ['clear', 'outside', 'no-permit', 'edge', 'closed']);
export const visitEndEnum = pgEnum('visit_end', ['check-out', 'end-of-day']);
export const uploadPurposeEnum = pgEnum('upload_purpose', ['harvest-photo', 'boundary-file']);
/** An outgoing mail: waiting for its first try, sent, failed and to be tried again, or failed for good after its last try. */
export const mailStateEnum = pgEnum('mail_state', ['waiting', 'sent', 'retrying', 'failed']);
export const paymentStateEnum = pgEnum('payment_state', ['pending', 'paid', 'cancelled', 'refunded', 'failed']);
export const tallyStateEnum = pgEnum('tally_state', ['within', 'nearing', 'reached', 'over']);
/**
 * `over-on-sync`: an entry recorded offline within the device's tallies, over once others' entries were counted;
 * `off-permit`: an entry recorded offline when harvest was not clear (permit, closure, zone, position or season).
 */
export const flagKindEnum = pgEnum('flag_kind', ['breach', 'nearing', 'over-on-sync', 'off-permit']);
/** Where a check-in's position came from: the device's fix, or a point the forager tapped on the map. */
export const positionSourceEnum = pgEnum('position_source', ['gps', 'tap']);
