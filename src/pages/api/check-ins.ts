import { db } from '../../db';
import { checkInSchema } from '../../lib/field.schemas';
import { endpoint, guard, json, readJson } from '../../server/http';
import { checkIn } from '../../server/field/check-in';

/** "I am here": position, accuracy radius and where the position came from (a fix or a tap) in; the verdict, hazards and what remains out. */
export const POST = endpoint(async ({ locals, request }) => {
  const actor = guard(locals.actor, 'field:check-in');
  const { longitude, latitude, accuracyM, source } = await readJson(request, checkInSchema);
  return json(await checkIn(db, { forager: { id: actor.id, clubIds: actor.memberOfClubIds }, position: [longitude, latitude], accuracyM, source }));
});
