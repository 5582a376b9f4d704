import { runSchema } from "./run";

/**
 * The API's body for logging a run: the run log form's schema, refusing fields it does not know
 * so a misspelt field is an error instead of silently dropped.
 */
export const runApiCreateSchema = runSchema.strict();

/** PATCH: any of the same fields; the server merges them over the run as stored and checks the whole again. */
export const runApiPatchSchema = runSchema.partial().omit({ supersedesId: true, leaveFramesOut: true }).strict();
