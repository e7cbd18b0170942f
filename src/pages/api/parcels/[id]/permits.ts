import { db } from '../../../../db';
import { createAccount, findUserByEmail } from '../../../../db/accounts.queries';
import { grantPermit } from '../../../../db/permits.commands';
import { listPermitEvents, listPermitsForParcel } from '../../../../db/permits.queries';
import { invalidInput } from '../../../../lib/errors';
import { grantPermitSchema } from '../../../../lib/permits.schemas';
import { endpoint, json, readJson } from '../../../../server/http';
import { noticeGranted } from '../../../../server/notices';
import { ownedParcel } from '../../../../server/parcel-access';
import { spend } from '../../../../server/rate-limits';

/** The parcel's permits with their histories. */
export const GET = endpoint(async ({ locals, params }) => {
  const { actor, parcelId } = await ownedParcel(locals, params, 'parcel:read');
  const permits = await listPermitsForParcel(db, { parcelId, ownerId: actor.id });
  const events = await listPermitEvents(db, { permitIds: permits.map((p) => p.id) });
  return json({ permits: permits.map((p) => ({ ...p, history: events.filter((e) => e.permitId === p.id) })) });
});

/** Grants a permit to a forager (by e-mail; an invitation when they have no account) or to a club. */
export const POST = endpoint(async ({ locals, params, request, url }) => {
  const { actor, parcelId } = await ownedParcel(locals, params, 'permit:grant');
  const input = await readJson(request, grantPermitSchema);
  await spend('mailToOthers', actor.id);
  // The invitee's account, the permit and its e-mail are made together, or none is.
  const { permit, invited } = await db.transaction(async (tx) => {
    let invited = false;
    let holder: { userId: string } | { clubId: string };
    if (input.holder.kind === 'forager') {
      let user = await findUserByEmail(tx, { email: input.holder.email });
      if (!user) {
        user = await createAccount(tx, { email: input.holder.email, name: input.holder.email.split('@')[0] ?? input.holder.email, managesLand: false });
        invited = true;
      }
      if (!user) throw invalidInput('holder.email', 'That address could not be used; try again.');
      if (user.id === actor.id) throw invalidInput('holder.email', 'You need no permit for your own parcel.');
      holder = { userId: user.id };
    } else {
      holder = { clubId: input.holder.clubId };
    }
    const granted = await grantPermit(tx, { parcelId, ownerId: actor.id, holder, input, now: new Date() });
    await noticeGranted(tx, { permitId: granted.id, origin: url.origin, invited });
    return { permit: granted, invited };
  });
  return json({ permit: { id: permit.id, state: permit.state }, invited }, 201);
});
