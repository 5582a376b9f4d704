import { type RouteConfig, index, prefix, route } from "@react-router/dev/routes";

export default [
  index("routes/dashboard.tsx"),

  route("sign-in", "routes/auth/sign-in.tsx"),
  route("sign-out", "routes/auth/sign-out.tsx"),
  route("forgot-password", "routes/auth/forgot-password.tsx"),
  route("reset-password/:token", "routes/auth/reset-password.tsx", { id: "reset-password" }),
  route("welcome/:token", "routes/auth/reset-password.tsx", { id: "welcome" }),

  route("account", "routes/account/account.tsx"),
  route("people", "routes/people/people.tsx"),
  route("mail", "routes/people/mail.tsx"),

  ...prefix("equipment", [
    index("routes/equipment/list.tsx"),
    route("new", "routes/equipment/edit.tsx", { id: "equipment-new" }),
    route(":id", "routes/equipment/detail.tsx"),
    route(":id/edit", "routes/equipment/edit.tsx", { id: "equipment-edit" }),
  ]),

  ...prefix("bookings", [index("routes/bookings/list.tsx"), route(":id", "routes/bookings/detail.tsx")]),
  ...prefix("calibrations", [
    index("routes/calibrations/list.tsx"),
    route("new", "routes/calibrations/edit.tsx", { id: "calibration-new" }),
    route(":id", "routes/calibrations/detail.tsx"),
    route(":id/edit", "routes/calibrations/edit.tsx", { id: "calibration-edit" }),
  ]),
  route("settings", "routes/settings/settings.tsx"),

  ...prefix("runs", [
    index("routes/runs/list.tsx"),
    route("rows", "routes/runs/rows.ts"),
    route(":id/sign-off", "routes/runs/sign-off.ts"),
    route(":id/report", "routes/runs/report.tsx"),
    route("new", "routes/runs/edit.tsx", { id: "run-new" }),
    route(":id", "routes/runs/run.tsx"),
    route(":id/edit", "routes/runs/edit.tsx", { id: "run-edit" }),
    route(":id/setup", "routes/runs/setup.tsx"),
    route(":id/frames/:frameId/image", "routes/runs/frame-image.ts"),
    route(":id/overlay.png", "routes/runs/overlay.ts"),
    route(":id/frames/remove", "routes/runs/frames-remove.ts"),
  ]),

  ...prefix("api/v1", [
    route("me", "routes/api/me.ts"),
    route("users", "routes/api/users.ts"),
    route("mail", "routes/api/mail.ts"),
    route("mail/outbox", "routes/api/mail-outbox.ts"),
    route("mail/outbox/:id/send-again", "routes/api/mail-outbox-send-again.ts"),
    route("equipment", "routes/api/equipment.ts"),
    route("equipment/:id", "routes/api/equipment-item.ts"),
    route("runs", "routes/api/runs.ts"),
    route("runs/:id", "routes/api/run.ts"),
    route("runs/:id/tracks.csv", "routes/api/run-tracks-csv.ts"),
    route("runs/:id/export.json", "routes/api/run-export.ts"),
    route("runs/:id/sign-off", "routes/api/run-sign-off.ts"),
    route("runs/:id/view-setup", "routes/api/run-view-setup.ts"),
    route("openapi.json", "routes/api/openapi.ts"),
    route("runs/:runId/frames", "routes/api/run-frames.ts"),
    route("runs/:runId/tracking", "routes/api/run-tracking.ts"),
    route("bookings", "routes/api/bookings.ts"),
    route("bookings/:id", "routes/api/booking-item.ts"),
    route("bookings/:id/approve", "routes/api/booking-decision.ts", { id: "api-booking-approve" }),
    route("bookings/:id/decline", "routes/api/booking-decision.ts", { id: "api-booking-decline" }),
    route("bookings/:id/cancel", "routes/api/booking-decision.ts", { id: "api-booking-cancel" }),
    route("bookings/:id/ics", "routes/api/booking-ics.ts"),
    route("feeds/:token/bookings.ics", "routes/api/booking-feed.ts"),
    route("calibrations", "routes/api/calibrations.ts"),
    route("calibrations/:id", "routes/api/calibration-item.ts"),
    route("calibrations/:id/sign-off", "routes/api/calibration-sign-off.ts"),
    route("calibrations/:id/attachments", "routes/api/calibration-attachments.ts"),
    route("calibrations/:id/attachments/:attachmentId", "routes/api/calibration-attachment.ts"),
    route("*", "routes/api/not-found.ts"),
  ]),

  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
