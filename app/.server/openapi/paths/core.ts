import type { OpenAPIRegistry } from "@asteasolutions/zod-to-openapi";
import { z } from "../zod";
import { error, ids, json, operation, routeSchema } from "./helpers";
import { equipmentListSchema, equipmentSchema } from "../responses/equipment";
import { capturedMailSchema, meSchema, outboxMailSchema, personSchema } from "../responses/people";
import { equipmentFilterSchema } from "~/lib/validation/equipment";

const forbidden = error("Your role does not allow this (forbidden).");

/** Who is asking, the people and mail (lab manager), the equipment register, and this document. */
export function registerCorePaths(registry: OpenAPIRegistry) {
  operation(registry, {
    method: "get",
    path: "/api/v1/me",
    operationId: "getMe",
    summary: "Who the token or session belongs to",
    responses: { 200: json(meSchema, "The person") },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/users",
    operationId: "listUsers",
    summary: "Everyone with an account (lab manager)",
    responses: { 200: json(z.array(personSchema), "Everyone, invited people too"), 403: forbidden },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/mail",
    operationId: "listCapturedMail",
    summary: "Captured mail of the fake mail server (lab manager; demo and test only)",
    request: { query: z.strictObject({ to: z.string().optional().openapi({ description: "Only mail to this address (case-insensitive)." }) }) },
    responses: {
      200: json(z.array(capturedMailSchema), "Newest first, at most 200"),
      403: forbidden,
      404: error("Mail goes through a real relay here: nothing is captured (not_found)."),
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/mail/outbox",
    operationId: "listOutbox",
    summary: "The mail outbox: every queued, sent or failed e-mail without its text (lab manager)",
    responses: { 200: json(z.array(outboxMailSchema), "Newest first, at most 200"), 403: forbidden },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/mail/outbox/{id}/send-again",
    operationId: "sendOutboxMailAgain",
    summary: "Queue a failed e-mail afresh, its attempts counted from nought (lab manager)",
    request: { params: ids("id") },
    responses: {
      200: json(outboxMailSchema, "Queued again; the sender tries it at once"),
      403: forbidden,
      404: error("No such message (not_found)."),
      409: error("The message is not failed: it was sent, or it is still queued and retried by itself (not_failed)."),
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/equipment",
    operationId: "listEquipment",
    summary: "The equipment register",
    request: { query: routeSchema(equipmentFilterSchema) },
    responses: { 200: json(equipmentListSchema, "Every item, or those the filter picks"), 400: error("An unknown kind or status (invalid_filter).") },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/equipment/{id}",
    operationId: "getEquipment",
    summary: "One item of equipment",
    request: { params: ids("id") },
    responses: { 200: json(equipmentSchema, "The item"), 404: error("No such item (not_found).") },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/openapi.json",
    operationId: "getOpenApi",
    summary: "This document (no sign-in needed)",
    public: true,
    responses: { 200: json(z.looseObject({ openapi: z.literal("3.1.0") }), "OpenAPI 3.1") },
  });
}
