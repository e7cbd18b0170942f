import { endpoint, json } from '../../../../../server/http';
import { saveAllowanceRequest } from '../../../../../server/allowance-requests';

/** Adds the allowance of a species the parcel does not allow yet; one that has an allowance is a 409 naming it. */
export const POST = endpoint(async ({ locals, params, request, url }) => json({ allowance: await saveAllowanceRequest(locals, params, request, { kind: 'new' }, url.origin) }, 201));

/** Sets the harvest terms of one species on the parcel (creating or replacing them): seasons, methods and limits. Holders whose limits got tighter are told. */
export const PUT = endpoint(async ({ locals, params, request, url }) => json({ allowance: await saveAllowanceRequest(locals, params, request, { kind: 'any' }, url.origin) }));
