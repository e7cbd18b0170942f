import { closureSchema, hazardSchema, parcelUpdateSchema, termsSchema } from '../../lib/land.schemas';
import { accessRequestSchema, decisionSchema, grantPermitSchema, permitLimitSchema, revokeSchema } from '../../lib/permits.schemas';

/** The schemas a form island may name (island props must be plain data, so forms name them). */
export const formSchemas = {
  closure: closureSchema,
  hazard: hazardSchema,
  terms: termsSchema,
  parcelSettings: parcelUpdateSchema,
  grantPermit: grantPermitSchema,
  accessRequest: accessRequestSchema,
  decision: decisionSchema,
  revoke: revokeSchema,
  permitLimit: permitLimitSchema,
};

export type FormSchemaName = keyof typeof formSchemas;
