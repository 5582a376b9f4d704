import { z } from "../zod";
import { isoTime, isoTimeOrNull } from "./common";
import { roles } from "~/lib/roles";

export const meSchema = z.strictObject({ id: z.number().int(), email: z.email(), name: z.string(), role: z.enum(roles) }).openapi("Me");
export type MeView = z.infer<typeof meSchema>;

export const personSchema = z
  .strictObject({
    id: z.number().int(),
    email: z.email(),
    name: z.string(),
    role: z.enum(roles),
    active: z.boolean(),
    invited: z.boolean().openapi({ description: "Invited and not yet signed up (no password set)." }),
  })
  .openapi("Person");
export type PersonView = z.infer<typeof personSchema>;

export const capturedMailSchema = z
  .strictObject({ id: z.number().int(), from: z.string().nullable(), to: z.array(z.string()), subject: z.string(), text: z.string(), receivedAt: isoTime() })
  .openapi("CapturedMail");
export type CapturedMailView = z.infer<typeof capturedMailSchema>;

export const outboxMailSchema = z
  .strictObject({
    id: z.number().int(),
    recipients: z.array(z.string()),
    subject: z.string(),
    state: z.enum(["queued", "sent", "failed"]),
    attempts: z.number().int().openapi({ description: "Attempts made, counting one under way (see sending)." }),
    sending: z.boolean().openapi({ description: "A sender holds the message and is trying it now." }),
    nextAttemptAt: isoTimeOrNull().openapi({ description: "Set while queued." }),
    lastError: z.string().nullable(),
    sentAt: isoTimeOrNull(),
    createdAt: isoTime(),
  })
  .openapi("OutboxMail", { description: "An e-mail in the outbox, without its text (it may hold a single-use link)." });
export type OutboxMailView = z.infer<typeof outboxMailSchema>;
