import type { OpenAPIRegistry, ResponseConfig, RouteConfig } from "@asteasolutions/zod-to-openapi";
import { z } from "../zod";
import { errorSchema } from "../responses/common";
import { MAX_ID } from "~/.server/http";

export type Status = 200 | 201 | 202 | 400 | 401 | 403 | 404 | 409 | 413 | 415 | 422 | 503;
type Answers = Partial<Record<Status, ResponseConfig>>;

/** A JSON answer with its schema. */
export const json = (schema: z.ZodType, description: string): ResponseConfig => ({ description, content: { "application/json": { schema } } });
/** An answer in the API's one error shape. */
export const error = (description: string): ResponseConfig => json(errorSchema, description);
/** An answer that is a file or text, not JSON. */
export const file = (type: string, description: string, example?: string): ResponseConfig => ({
  description,
  content: { [type]: { schema: z.string().openapi(example ? { example } : {}) } },
});

/** The answers every signed-in operation can give without its own words. */
export const notSignedIn = error(
  "Not signed in (unauthenticated), or the API token is wrong (invalid_token), expired (token_expired) or revoked (token_revoked).",
);
export const notJson = error("The body is not sent as application/json (unsupported_media_type).");
export const badBody = (what = "") =>
  error(
    `invalid_json: the body is not JSON; invalid_input: it fails the request schema (error.issues names every field in error, unknown fields included)${what ? `; ${what}` : ""}.`,
  );

/** Path parameters as the routes parse them (parseId): a positive whole number up to 2³¹ − 1, else 404. */
export const ids = (...names: string[]) => z.strictObject(Object.fromEntries(names.map((n) => [n, z.number().int().min(1).max(MAX_ID)])));

/** The person's credentials: an API token (Authorization: Bearer tks_…) or the browser's session cookie. */
export const signedIn: Record<string, string[]>[] = [{ bearerToken: [] }, { sessionCookie: [] }];

type Operation = Omit<RouteConfig, "responses" | "security"> & { responses: Answers; public?: boolean };

/** server-bodies.mjs refuses a body over its path's limit while it streams, before the route reads it. */
const tooLarge = error("The body is over this path's size limit (too_large); refused before the route reads it.");

/**
 * Registers one operation: its operationId is required, security is set, 401 is added to every
 * signed-in one and 413 to every one that takes a body (unless it says more about its own 413).
 */
export function operation(registry: OpenAPIRegistry, op: Operation & { operationId: string }) {
  const { public: isPublic, responses, ...rest } = op;
  registry.registerPath({
    ...rest,
    security: isPublic ? [] : signedIn,
    responses: { ...(isPublic ? {} : { 401: notSignedIn }), ...(op.request?.body ? { 413: tooLarge } : {}), ...responses },
  });
}

/**
 * A route's own zod schema (from app/lib/validation), ready to be registered. zod 4 copies a
 * schema's methods onto it when it is made, so one made before extendZodWithOpenApi ran has no
 * `.openapi`; a clone is made now and has it. Same definition: the same checks, the same JSON Schema.
 */
export const routeSchema = <T extends z.ZodType>(schema: T): T => schema.clone();
