/**
 * Twenty requests at once that each find-then-create (or check-then-write) on the same key, through
 * the real page routes, as the server would run them side by side. On either database each must
 * leave one row (the database's unique index decides, or a row lock makes them take turns) and
 * none may answer 500. With TEST_DATABASE_URL=postgres://… they run against PostgreSQL.
 *
 * Left to the clock, twenty requests often do not overlap where it matters: the first commits
 * before the last has looked. So each test holds the statement that writes the contested row until
 * all twenty have reached it (or none has arrived for a moment: on SQLite, and behind a row lock,
 * they arrive one by one), then lets them go together.
 */
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from "vitest";
import { Op } from "sequelize";
import {
  CalendarFeed,
  Calibration,
  CalibrationHistory,
  LabSetting,
  OutboxMail,
  Run,
  RunHistory,
  User,
  UserPreference,
  ViewSetup,
  sequelize,
} from "~/.server/db";
import { feedOwner } from "~/.server/booking-calendar";
import { createApiToken } from "~/.server/auth/api-tokens";
import { checkedRunFor } from "~/.server/runs/testing";
import { whenRechecksIdle } from "~/.server/runs/rechecks";
import { stopFakeSmtp } from "~/.server/mail/fake-smtp";
import { settingDefaults } from "~/lib/settings";
import { action as setupAction } from "~/routes/runs/setup";
import { action as runsListAction } from "~/routes/runs/list";
import { action as bookingsListAction } from "~/routes/bookings/list";
import { action as settingsAction } from "~/routes/settings/settings";
import { action as peopleAction } from "~/routes/people/people";
import { action as calibrationAction } from "~/routes/api/calibration-item";
import { action as calibrationSignOffAction } from "~/routes/api/calibration-sign-off";
import { action as runAction } from "~/routes/api/run";
import { action as runSignOffAction } from "~/routes/api/run-sign-off";
import { attackLab, type AttackLab } from "./fixtures";
import { buildRequest, callRoute, type Identity, type Outcome, type RoutedModule } from "./harness";

let lab: AttackLab;

beforeAll(async () => {
  lab = await attackLab();
});

afterAll(async () => {
  await whenRechecksIdle();
  await stopFakeSmtp();
  await sequelize.close();
});

const asCookie = (user: { id: number }): Identity => ({ label: "by cookie", role: null, by: "cookie", userId: user.id });

/** A form POST to a page action, answered as React Router would (a throw that is not a Response is a 500). */
async function post(action: unknown, who: { id: number }, url: string, fields: Record<string, string>, params: Record<string, string> = {}): Promise<Outcome> {
  const route = { action, isApi: false } as unknown as RoutedModule;
  const request = await buildRequest(asCookie(who), {
    method: "POST",
    url,
    headers: { "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams(fields).toString(),
  });
  return callRoute(route, request, params);
}

afterEach(() => {
  vi.restoreAllMocks();
});

type QueryFn = (sql: unknown, options?: unknown) => Promise<unknown>;

/** Holds every statement whose SQL matches until `count` are waiting, or none has come for `quietMs`; then releases them all. */
function holdTogether(statement: RegExp, count: number, quietMs = 100) {
  const query = sequelize.query.bind(sequelize) as unknown as QueryFn;
  let waiting: (() => void)[] = [];
  let timer: ReturnType<typeof setTimeout> | undefined;
  const release = () => {
    clearTimeout(timer);
    const go = waiting;
    waiting = [];
    for (const resolve of go) resolve();
  };
  vi.spyOn(sequelize, "query").mockImplementation((async (sql: unknown, options?: unknown) => {
    const text = typeof sql === "string" ? sql : String((sql as { query?: unknown })?.query ?? "");
    if (statement.test(text)) {
      await new Promise<void>((resolve) => {
        waiting.push(resolve);
        clearTimeout(timer);
        if (waiting.length >= count) release();
        else timer = setTimeout(release, quietMs);
      });
    }
    return query(sql, options);
  }) as never);
}

/** An INSERT (plain, or an upsert's INSERT … ON CONFLICT) into the table, in either database's quoting. */
const insertInto = (table: string) => new RegExp(`^\\s*INSERT INTO [\`"]${table}[\`"]`, "i");

/** Twenty at once; every answer's status, and any crash (a 500) in words. */
async function twenty(send: (i: number) => Promise<Outcome>) {
  const outcomes = await Promise.all(Array.from({ length: 20 }, (_, i) => send(i)));
  const crashes = outcomes.filter((o) => o.crash || o.status >= 500).map((o) => String(o.crash ?? JSON.stringify(o.json)).slice(0, 200));
  const statuses = outcomes.reduce<Record<number, number>>((t, o) => ({ ...t, [o.status]: (t[o.status] ?? 0) + 1 }), {});
  return { outcomes, crashes, statuses };
}

describe("twenty of the same write at once: one row, no 500", { timeout: 120_000 }, () => {
  it("view setups (one per run): twenty saves of one run's marks leave one setup row", async () => {
    const run = await Run.findByPk(lab.run.id);
    await run!.update({ frameWidthPx: 640, frameHeightPx: 480 });
    holdTogether(insertInto("view_setups"), 20);
    const { crashes, statuses } = await twenty((i) =>
      post(setupAction, lab.technician, `/runs/${run!.id}/setup`, { centreX: String(300 + i), centreY: "240", mirrored: "" }, { id: String(run!.id) }),
    );
    expect(crashes).toEqual([]);
    expect(statuses).toEqual({ 302: 20 });
    const setups = await ViewSetup.findAll({ where: { runId: run!.id } });
    expect(setups).toHaveLength(1);
    expect(setups[0]!.centreXPx).toBeGreaterThanOrEqual(300);
  });

  it("run table columns (one preference per person and key): twenty saves leave one row", async () => {
    holdTogether(insertInto("user_preferences"), 20);
    const { crashes, statuses } = await twenty((i) =>
      post(runsListAction, lab.technician, "/runs", { intent: "columns", hidden: JSON.stringify(i % 2 ? ["purpose"] : ["tank", "camera"]) }),
    );
    expect(crashes).toEqual([]);
    expect(statuses).toEqual({ 200: 20 });
    expect(await UserPreference.count({ where: { userId: lab.technician.id, key: "runs.columns" } })).toBe(1);
  });

  it("calendar feeds (one per person): twenty new addresses at once leave one row, and exactly one address works", async () => {
    holdTogether(insertInto("calendar_feeds"), 20);
    const { outcomes, crashes, statuses } = await twenty(() => post(bookingsListAction, lab.instructor, "/bookings", { intent: "feed" }));
    expect(crashes).toEqual([]);
    expect(statuses).toEqual({ 200: 20 });
    expect(await CalendarFeed.count({ where: { userId: lab.instructor.id } })).toBe(1);
    const tokens = outcomes.map((o) => /\/feeds\/([^/]+)\/bookings\.ics$/.exec((o.json as { feedUrl: string }).feedUrl)![1]!);
    const working = [];
    for (const token of tokens) if (await feedOwner(token)) working.push(token);
    expect(working).toHaveLength(1);
  });

  it("lab settings (one row per setting): twenty saves at once leave one row per setting", async () => {
    holdTogether(insertInto("lab_settings"), 20);
    const form = (i: number) =>
      Object.fromEntries(
        Object.entries({ ...settingDefaults, spinUpTimesToWait: 3 + (i % 5), timeZone: i % 2 ? "Europe/Berlin" : "America/New_York" }).map(([k, v]) => [
          k,
          String(v),
        ]),
      );
    const { crashes, statuses } = await twenty((i) => post(settingsAction, lab.manager, "/settings", form(i)));
    expect(crashes).toEqual([]);
    expect(statuses).toEqual({ 200: 20 });
    const rows = await LabSetting.findAll();
    // One row per setting, the time zone among them, beside the lab's identifier made at the first start.
    expect(rows.map((r) => r.key).sort()).toEqual([...Object.keys(settingDefaults), "timeZone", "labId"].sort());
  });

  it("people (one per e-mail address): twenty invitations of one address at once add one person and send one invitation; the rest are told 409", async () => {
    const email = "new.person@tankside.example";
    holdTogether(insertInto("users"), 20);
    const { crashes, statuses } = await twenty(() =>
      post(peopleAction, lab.manager, "/people", { intent: "invite", email, name: "New Person", role: "technician" }),
    );
    expect(crashes).toEqual([]);
    expect(statuses).toEqual({ 200: 1, 409: 19 });
    expect(await User.count({ where: { email } })).toBe(1);
    expect(await OutboxMail.count({ where: { recipients: email, subject: { [Op.like]: "You are invited%" } } })).toBe(1);
  });

  it("the last two lab managers demoted at the same moment: one change goes through, the other is refused, and one manager remains (10 tries)", async () => {
    for (let attempt = 0; attempt < 10; attempt++) {
      const pair = await Promise.all(
        ["a", "b"].map((x) =>
          User.create({
            email: `manager.${x}${attempt}@tankside.example`,
            name: `Manager ${x}`,
            role: "lab_manager",
            passwordHash: "set",
            passwordChangedAt: new Date(),
          }),
        ),
      );
      // Only these two count: the fixture's manager, who asks for both changes, has no password (an unanswered invitation), and
      // the pair left over from the try before is one manager who now steps aside.
      await User.update({ role: "technician" }, { where: { role: "lab_manager", id: { [Op.notIn]: pair.map((u) => u.id) }, passwordHash: { [Op.ne]: null } } });
      holdTogether(/^\s*UPDATE [`"]users[`"] SET [`"]role[`"]/i, 2);
      const outcomes = await Promise.all(
        pair.map((u) => post(peopleAction, lab.manager, "/people", { intent: "role", userId: String(u.id), role: "technician" })),
      );
      expect(outcomes.map((o) => o.crash)).toEqual([null, null]);
      expect(outcomes.map((o) => o.status).sort()).toEqual([200, 409]);
      vi.restoreAllMocks();
      expect(await User.count({ where: { role: "lab_manager", active: true, passwordHash: { [Op.ne]: null } } })).toBe(1);
    }
  });
});

/** An API call with a bearer token, answered as React Router would. */
async function api(action: unknown, token: string, method: string, url: string, id: number, body?: unknown): Promise<Outcome> {
  const route = { action, isApi: true } as unknown as RoutedModule;
  const who: Identity = { label: "by token", role: null, by: "token", token };
  const request = await buildRequest(who, {
    method,
    url,
    headers: body ? { "Content-Type": "application/json" } : {},
    body: body ? JSON.stringify(body) : null,
  });
  return callRoute(route, request, { id: String(id) });
}

describe("edits racing a sign-off: nothing changes once signed (5 tries each)", { timeout: 120_000 }, () => {
  it("a calibration record: ten edits and the sign-off at once; every edit lands before the sign-off or is refused 409", async () => {
    const tech = (await createApiToken(lab.technician.id, "races")).token;
    const manager = (await createApiToken(lab.manager.id, "races")).token;
    for (let attempt = 0; attempt < 5; attempt++) {
      const cal = await Calibration.create({
        ...lab.calibration.get({ plain: true }),
        id: undefined,
        notes: "as recorded",
        signedOffById: null,
        signedOffAt: null,
      });
      const edit = (i: number) => ({
        kind: "scale",
        equipmentId: lab.camera.id,
        performedOn: "2026-11-20",
        knownLengthMm: 300,
        knownLengthUncertaintyMm: 0.5,
        lengthPx: 600,
        lengthUncertaintyPx: 1,
        notes: `edit ${i}`,
      });
      const outcomes = await Promise.all([
        ...Array.from({ length: 10 }, (_, i) => api(calibrationAction, tech, "PUT", `/api/v1/calibrations/${cal.id}`, cal.id, edit(i))),
        api(calibrationSignOffAction, manager, "POST", `/api/v1/calibrations/${cal.id}/sign-off`, cal.id),
      ]);
      expect(outcomes.map((o) => String(o.crash ?? ""))).toEqual(Array(11).fill(""));
      expect(outcomes[10]!.status).toBe(200);
      expect(outcomes.slice(0, 10).every((o) => o.status === 200 || o.status === 409)).toBe(true);
      const history = await CalibrationHistory.findAll({ where: { calibrationId: cal.id }, order: [["id", "ASC"]] });
      const signed = history.findIndex((h) => h.field === "signedOff");
      expect(history.slice(signed + 1).map((h) => h.field)).toEqual([]);
      const lastNotes = history.filter((h) => h.field === "notes").at(-1)?.newValue ?? "as recorded";
      expect((await Calibration.findByPk(cal.id))!.notes).toBe(lastNotes);
    }
  });

  it("a run: ten edits of its notes and the sign-off at once; every edit lands before the sign-off or is refused 409", async () => {
    const tech = (await createApiToken(lab.technician.id, "races")).token;
    const manager = (await createApiToken(lab.manager.id, "races")).token;
    for (let attempt = 0; attempt < 5; attempt++) {
      const { run } = await checkedRunFor(lab, lab.technician);
      const outcomes = await Promise.all([
        ...Array.from({ length: 10 }, (_, i) => api(runAction, tech, "PATCH", `/api/v1/runs/${run.id}`, run.id, { notes: `edit ${i}` })),
        api(runSignOffAction, manager, "POST", `/api/v1/runs/${run.id}/sign-off`, run.id),
      ]);
      expect(outcomes.map((o) => String(o.crash ?? ""))).toEqual(Array(11).fill(""));
      expect(outcomes[10]!.status).toBe(200);
      expect(outcomes.slice(0, 10).every((o) => o.status === 200 || o.status === 409)).toBe(true);
      const history = await RunHistory.findAll({ where: { runId: run.id }, order: [["id", "ASC"]] });
      const signed = history.findIndex((h) => h.field === "state" && h.newValue === "signed_off");
      expect(history.slice(signed + 1).map((h) => h.field)).toEqual([]);
      const lastNotes = history.filter((h) => h.field === "notes").at(-1)?.newValue ?? null;
      expect((await Run.findByPk(run.id))!.notes).toBe(lastNotes);
    }
  });
});
