import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Op } from "sequelize";
import { Calibration, CalibrationAttachment, CapturedMail, Equipment, OutboxMail, User, migrate, sequelize } from "./db";
import { OutboxSender } from "./mail/outbox-sender";
import { CalibrationError, createCalibration, signOffCalibration, toDayString, updateCalibration } from "./calibrations";
import { calibrationsInForce, listCalibrationsDueOrExpired, rateCalibrationInForce, trueRateFromCalibration } from "./calibrations-in-force";
import { calibrationReminderKey, serializeCalibrations } from "./calibration-views";
import { runCalibrationReminders } from "./calibration-reminders";
import { setLabTimeZone } from "./settings";
import { addCalibrationAttachment } from "./uploads/calibration-attachments";
import { stopFakeSmtp } from "./mail/fake-smtp";
import type { CalibrationInput } from "~/lib/validation/calibrations";

let table: Equipment;
let camera: Equipment;
let meter: Equipment;
let tech: User;
let manager: User;
const managerUser = () => ({ id: manager.id, role: "lab_manager" as const, name: manager.name });

const daysAgo = (n: number) => toDayString(new Date(Date.now() - n * 86_400_000));
const readings = [5, 10, 15, 20].map((s) => ({ setRpm: s, measuredRpm: 1.004 * s - 0.02 }));
const rateInput = (over: Partial<CalibrationInput> = {}): CalibrationInput => ({
  kind: "rate",
  equipmentId: table.id,
  meterId: meter.id,
  performedOn: daysAgo(10),
  readings,
  ...over,
});

beforeAll(async () => {
  await migrate();
  table = await Equipment.create({ kind: "table", name: "Test table", diameterM: 0.6, maxRateRpm: 30, flatTable: false, rateTolerancePct: 1 });
  camera = await Equipment.create({ kind: "camera", name: "Test camera", resolutionWidthPx: 1280, resolutionHeightPx: 720, nominalFrameRateFps: 30 });
  meter = await Equipment.create({ kind: "rate_meter", name: "Test tachometer", meterType: "tachometer" });
  tech = await User.create({ email: "t@tankside.example", name: "Test Tech", role: "technician", passwordHash: null, passwordChangedAt: null });
  manager = await User.create({ email: "m@tankside.example", name: "Test Manager", role: "lab_manager", passwordHash: null, passwordChangedAt: null });
  await User.create({ email: "m2@tankside.example", name: "Second Manager", role: "lab_manager", passwordHash: null, passwordChangedAt: null });
});

afterAll(async () => {
  await stopFakeSmtp();
  await sequelize.close();
});

describe("calibration records", () => {
  it("only the technician who performed it or a lab manager may edit it or attach files", async () => {
    const cal = await createCalibration(rateInput({ notes: "mine" }), tech);
    const other = await User.create({ email: "t2@tankside.example", name: "Other Tech", role: "technician", passwordHash: null, passwordChangedAt: null });
    const png = Buffer.from(
      "89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000002000154a24f5d0000000049454e44ae426082",
      "hex",
    );
    await expect(updateCalibration(cal.id, rateInput({ notes: "not yours" }), other)).rejects.toMatchObject({ status: 403, code: "forbidden" });
    await expect(addCalibrationAttachment(cal.id, { name: "p.png", bytes: png }, other)).rejects.toMatchObject({ status: 403, code: "forbidden" });
    expect((await Calibration.findByPk(cal.id))!.notes).toBe("mine");
    expect(await CalibrationAttachment.count({ where: { calibrationId: cal.id } })).toBe(0);
    expect((await updateCalibration(cal.id, rateInput({ notes: "by the manager" }), managerUser())).notes).toBe("by the manager");
    expect((await addCalibrationAttachment(cal.id, { name: "p.png", bytes: png }, tech)).calibrationId).toBe(cal.id);
  });

  it("fits the readings on creation and uses the table's tolerance", async () => {
    const cal = await createCalibration(rateInput(), tech);
    expect(cal.slope).toBeCloseTo(1.004, 10);
    expect(cal.interceptRpm).toBeCloseTo(-0.02, 10);
    expect(cal.tolerancePct).toBe(1);
    expect(cal.passed).toBe(true);
    // Due date defaults to the rate interval (180 days) after the calibration day, through the end of that day.
    const expectedDue = new Date(cal.performedAt);
    expectedDue.setDate(expectedDue.getDate() + 180);
    expect(toDayString(cal.dueAt)).toBe(toDayString(expectedDue));
  });

  it("refuses bad input and saves nothing", async () => {
    const before = await Calibration.count();
    await expect(createCalibration(rateInput({ readings: readings.slice(0, 2) }), tech)).rejects.toThrow(/3 or more/);
    await expect(createCalibration(rateInput({ readings: [...readings.slice(0, 2), { setRpm: 0, measuredRpm: 0 }] }), tech)).rejects.toThrow(/more than zero/);
    await expect(createCalibration(rateInput({ dueOn: daysAgo(11) }), tech)).rejects.toMatchObject({ status: 422, code: "invalid_due_date" });
    await expect(createCalibration(rateInput({ equipmentId: camera.id }), tech)).rejects.toMatchObject({ status: 422, code: "wrong_equipment" });
    await expect(createCalibration(rateInput({ equipmentId: 9999 }), tech)).rejects.toMatchObject({ status: 404 });
    await expect(createCalibration(rateInput({ meterId: camera.id }), tech)).rejects.toMatchObject({ code: "invalid_meter" });
    expect(await Calibration.count()).toBe(before);
  });

  it("cannot be edited once signed off: 409, and nothing in the row changes", async () => {
    const cal = await createCalibration(rateInput({ notes: "first" }), tech);
    const edited = await updateCalibration(cal.id, rateInput({ notes: "second" }), tech);
    expect(edited.notes).toBe("second");
    await signOffCalibration(cal.id, managerUser());
    const snapshot = (await Calibration.findByPk(cal.id, { raw: true }))!;
    const attempt = updateCalibration(cal.id, rateInput({ notes: "third", readings: readings.map((r) => ({ ...r, measuredRpm: r.measuredRpm + 1 })) }), tech);
    await expect(attempt).rejects.toBeInstanceOf(CalibrationError);
    await expect(attempt).rejects.toMatchObject({ status: 409, code: "calibration_signed" });
    await expect(signOffCalibration(cal.id, managerUser())).rejects.toMatchObject({ status: 409 });
    const png = Buffer.from(
      "89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000002000154a24f5d0000000049454e44ae426082",
      "hex",
    );
    await expect(addCalibrationAttachment(cal.id, { name: "photo.png", bytes: png }, tech)).rejects.toMatchObject({ status: 409 });
    expect(await Calibration.findByPk(cal.id, { raw: true })).toEqual(snapshot);
  });

  it("refuses a sign-off by anyone but a lab manager", async () => {
    const cal = await createCalibration(rateInput(), tech);
    await expect(signOffCalibration(cal.id, { id: tech.id, role: "technician" })).rejects.toMatchObject({ status: 403 });
    expect((await Calibration.findByPk(cal.id))!.signedOffAt).toBeNull();
  });

  it("accepts a PNG by content and refuses a text file named .pdf", async () => {
    const cal = await createCalibration(rateInput(), tech);
    const png = Buffer.from(
      "89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c4890000000d49444154789c6360000002000154a24f5d0000000049454e44ae426082",
      "hex",
    );
    const row = await addCalibrationAttachment(cal.id, { name: "meter.png", bytes: png }, tech);
    expect(row.contentType).toBe("image/png");
    expect(row.storedName).not.toContain("meter");
    const pdf = await addCalibrationAttachment(
      cal.id,
      { name: "cert.bin", bytes: Buffer.from("%PDF-1.4\n%âãÏÓ\n1 0 obj\n<<>>\nendobj\ntrailer\n<<>>\n%%EOF\n", "latin1") },
      tech,
    );
    expect(pdf.contentType).toBe("application/pdf");
    await expect(addCalibrationAttachment(cal.id, { name: "cert.pdf", bytes: Buffer.from("just some text") }, tech)).rejects.toMatchObject({
      status: 422,
      code: "unsupported_attachment",
    });
  });
});

describe("in force at a moment (what a run freezes at its creation)", () => {
  let cam: Equipment;
  beforeAll(async () => {
    cam = await Equipment.create({
      kind: "camera",
      name: "Timing camera",
      maker: null,
      model: null,
      serialNumber: null,
      location: null,
      notes: null,
      diameterM: null,
      maxRateRpm: null,
      flatTable: null,
      rateTolerancePct: null,
      depthM: null,
      resolutionWidthPx: 640,
      resolutionHeightPx: 480,
      nominalFrameRateFps: 30,
      meterType: null,
    });
  });
  const timing = (performedOn: string, dueOn?: string): CalibrationInput => ({
    kind: "timing",
    equipmentId: cam.id,
    performedOn,
    dueOn,
    nominalFrameRateFps: 30,
    frameIntervals: 1799,
    frameIntervalsUncertainty: 1,
    referenceElapsedS: 60,
    referenceElapsedUncertaintyS: 0.02,
  });

  it("a record signed after T is not in force at T; a later signed one supersedes; past due is not in force", async () => {
    const first = await createCalibration(timing(daysAgo(40)), tech);
    const beforeSignOff = new Date();
    await new Promise((r) => setTimeout(r, 5));
    await signOffCalibration(first.id, managerUser());
    const afterFirst = new Date();
    expect((await calibrationsInForce([cam.id], beforeSignOff)).map((c) => c.id)).toEqual([]);
    expect((await calibrationsInForce([cam.id], afterFirst)).map((c) => c.id)).toEqual([first.id]);

    const second = await createCalibration(timing(daysAgo(5)), tech);
    // Unsigned: the first still counts.
    expect((await calibrationsInForce([cam.id], new Date())).map((c) => c.id)).toEqual([first.id]);
    await new Promise((r) => setTimeout(r, 5));
    await signOffCalibration(second.id, managerUser());
    const now = new Date();
    const inForce = await calibrationsInForce([cam.id], now);
    expect(inForce.map((c) => c.id)).toEqual([second.id]);
    expect(inForce[0]).toMatchObject({ kind: "timing", equipmentId: cam.id, dueAt: second.dueAt.toISOString() });
    // What was in force at afterFirst stays the first record: a run stored then keeps its answer.
    expect((await calibrationsInForce([cam.id], afterFirst)).map((c) => c.id)).toEqual([first.id]);
    // Past due: the day after the due date nothing is in force.
    const afterDue = new Date(second.dueAt.getTime() + 1);
    expect(await calibrationsInForce([cam.id], afterDue)).toEqual([]);
  });

  it("rateCalibrationInForce gives the line, and trueRateFromCalibration the corrected rate", async () => {
    const other = await Equipment.create({ ...table.get({ plain: true }), id: undefined, name: "Second table" });
    expect(await rateCalibrationInForce(other.id, new Date())).toBeNull();
    const cal = await createCalibration(
      rateInput({
        equipmentId: other.id,
        readings: [5, 10, 15, 20].map((s, i) => ({ setRpm: s, measuredRpm: 1.004 * s - 0.02 + [0.003, -0.004, 0.002, -0.001][i]! })),
      }),
      tech,
    );
    await signOffCalibration(cal.id, managerUser());
    const line = await rateCalibrationInForce(other.id, new Date());
    expect(line).not.toBeNull();
    expect(line!.id).toBe(cal.id);
    const corrected = trueRateFromCalibration(line!, 10);
    expect(corrected.rpm).toBeCloseTo(line!.slope * 10 + line!.intercept, 12);
    expect(corrected.rpm).toBeGreaterThan(10);
    expect(corrected.stdErrorRpm).toBeGreaterThan(0);
    expect(corrected.stdErrorRpm).toBeLessThan(line!.residualSd);
  });
});

describe("due list and reminders", () => {
  it("lists past due first and enqueues one reminder per record, delivered once, not again after a restart", async () => {
    const base = { diameterM: 0.5, maxRateRpm: 20, flatTable: false, rateTolerancePct: 1 };
    const soon = await Equipment.create({ ...base, kind: "table", name: "Reminder table soon" });
    const late = await Equipment.create({ ...base, kind: "table", name: "Reminder table late" });
    const a = await createCalibration(
      rateInput({ equipmentId: soon.id, performedOn: daysAgo(170), dueOn: toDayString(new Date(Date.now() + 5 * 86_400_000)) }),
      tech,
    );
    const b = await createCalibration(rateInput({ equipmentId: late.id, performedOn: daysAgo(200), dueOn: daysAgo(3) }), tech);
    await signOffCalibration(a.id, managerUser());
    await signOffCalibration(b.id, managerUser());

    const due = await listCalibrationsDueOrExpired(14);
    const ours = due.filter((d) => d.id === a.id || d.id === b.id);
    expect(ours.map((d) => [d.id, d.pastDue])).toEqual([
      [b.id, true],
      [a.id, false],
    ]);

    const countMail = () => CapturedMail.count({ where: { subject: { [Op.like]: "%Reminder table%" } } });
    const first = await runCalibrationReminders();
    expect(first.queued).toEqual(expect.arrayContaining([a.id, b.id]));
    await new OutboxSender().drain();
    expect(await countMail()).toBe(2);
    const mail = await CapturedMail.findOne({ where: { subject: { [Op.like]: "%Reminder table late%" } } });
    expect(mail!.envelopeTo.split(", ").sort()).toEqual(["m2@tankside.example", "m@tankside.example"]);
    expect(mail!.textBody).toContain(`/calibrations/${b.id}`);

    // A restart: the task runs again from the start, in a fresh pass.
    const second = await runCalibrationReminders();
    expect(second.queued).not.toContain(a.id);
    expect(second.queued).not.toContain(b.id);
    await new OutboxSender().drain();
    expect(await countMail()).toBe(2);
    const rows = await OutboxMail.findAll({ where: { dedupeKey: [calibrationReminderKey(a.id), calibrationReminderKey(b.id)] } });
    expect(rows.map((r) => r.state)).toEqual(["sent", "sent"]);
    const [view] = await serializeCalibrations([(await Calibration.findByPk(a.id))!]);
    expect(view!.reminder).toMatchObject({ state: "sent" });
  });

  it("two reminder passes running at once enqueue each record's reminder exactly once", async () => {
    const t = await Equipment.create({ ...table.get({ plain: true }), id: undefined, name: "Reminder table twice" });
    const c = await createCalibration(
      rateInput({ equipmentId: t.id, performedOn: daysAgo(178), dueOn: toDayString(new Date(Date.now() + 3 * 86_400_000)) }),
      tech,
    );
    await signOffCalibration(c.id, managerUser());
    const [x, y] = await Promise.all([runCalibrationReminders(), runCalibrationReminders()]);
    expect([...x.queued, ...y.queued].filter((id) => id === c.id)).toHaveLength(1);
    expect(await OutboxMail.count({ where: { dedupeKey: calibrationReminderKey(c.id) } })).toBe(1);
  });

  it("queues nothing while there is no lab manager to tell, and queues it on the next pass once there is", async () => {
    const t = await Equipment.create({ ...table.get({ plain: true }), id: undefined, name: "Reminder table retry" });
    const c = await createCalibration(
      rateInput({ equipmentId: t.id, performedOn: daysAgo(175), dueOn: toDayString(new Date(Date.now() + 2 * 86_400_000)) }),
      tech,
    );
    await signOffCalibration(c.id, managerUser());
    await User.update({ active: false }, { where: { role: "lab_manager" } });
    const nobody = await runCalibrationReminders();
    expect(nobody.queued).not.toContain(c.id);
    expect(await OutboxMail.count({ where: { dedupeKey: calibrationReminderKey(c.id) } })).toBe(0);
    await User.update({ active: true }, { where: { role: "lab_manager" } });
    const retried = await runCalibrationReminders();
    expect(retried.queued).toEqual([c.id]);
    await new OutboxSender().drain();
    expect(await CapturedMail.count({ where: { subject: { [Op.like]: "%Reminder table retry%" } } })).toBe(1);
  });

  it("the reminder keeps the equipment's name as written and gives the due day on the lab's calendar, whatever the server's zone", async () => {
    const savedTz = process.env.TZ;
    process.env.TZ = "America/Los_Angeles";
    await setLabTimeZone("Pacific/Auckland");
    try {
      const t = await Equipment.create({ ...table.get({ plain: true }), id: undefined, name: "Table B (west bench) — Ørsted rig" });
      const dueOn = toDayString(new Date(Date.now() + 4 * 86_400_000), "Pacific/Auckland");
      const c = await createCalibration(rateInput({ equipmentId: t.id, performedOn: daysAgo(176), dueOn }), tech);
      await signOffCalibration(c.id, managerUser());
      await runCalibrationReminders();
      const row = await OutboxMail.findOne({ where: { dedupeKey: calibrationReminderKey(c.id) } });
      // The day as entered, spelled out independently of the code under test.
      const day = new Intl.DateTimeFormat("en-GB", { day: "numeric", month: "short", year: "numeric", timeZone: "UTC" }).format(new Date(`${dueOn}T12:00:00Z`));
      expect(row!.subject).toBe(`Calibration due ${day}: Rate calibration of Table B (west bench) — Ørsted rig`);
      expect(row!.textBody).toMatch(new RegExp(`^The rate calibration of Table B \\(west bench\\) — Ørsted rig falls due on ${day} \\(in [34] days\\)\\.`));
      expect(row!.textBody).not.toContain("table b");
    } finally {
      process.env.TZ = savedTz;
      await setLabTimeZone("");
    }
  });
});
