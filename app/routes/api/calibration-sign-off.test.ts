import { afterAll, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { callApi } from "../../../tests/support/api-contract";
import { Calibration, CalibrationAttachment, CalibrationHistory, Equipment, User, sequelize } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { createCalibration, toDayString } from "~/.server/calibrations";
import { setSignOffRule } from "~/.server/settings";
import { calibrationKey, store } from "~/.server/storage";
import { addCalibrationAttachment } from "~/.server/uploads/calibration-attachments";
import { postPageForm, smallLab } from "~/.server/test-support";
import type { CurrentUser } from "~/.server/auth/permissions";
import { action as signOffAction } from "./calibration-sign-off";
import { action as attachmentAction } from "./calibration-attachment";
import { action as pageAction } from "../calibrations/detail";

let lab: Awaited<ReturnType<typeof smallLab>>;
let secondManager: CurrentUser;
let meter: Equipment;
const tokens = new Map<number, string>();
let png: Buffer;

beforeAll(async () => {
  lab = await smallLab();
  const u = await User.create({
    email: "second-manager@tankside.example",
    name: "Second Manager",
    role: "lab_manager",
    passwordHash: null,
    passwordChangedAt: null,
  });
  secondManager = { id: u.id, email: u.email, name: u.name, role: u.role };
  meter = await Equipment.create({ kind: "rate_meter", name: "Sign-off tachometer", meterType: "tachometer" } as never);
  for (const p of [lab.tech, lab.otherTech, lab.manager, secondManager]) tokens.set(p.id, (await createApiToken(p.id, "script")).token);
  png = await sharp({ create: { width: 4, height: 4, channels: 3, background: "#888" } })
    .png()
    .toBuffer();
});
afterAll(async () => {
  await setSignOffRule("second_person");
  await sequelize.close();
});

const record = (performer: CurrentUser) =>
  createCalibration(
    {
      kind: "rate",
      equipmentId: lab.table.id,
      meterId: meter.id,
      performedOn: toDayString(new Date(Date.now() - 86_400_000)),
      readings: [5, 10, 15].map((s) => ({ setRpm: s, measuredRpm: s })),
    },
    performer,
  );
const req = (method: string, path: string, who: CurrentUser) =>
  new Request(`http://localhost${path}`, { method, headers: { Authorization: `Bearer ${tokens.get(who.id)}` } });
const signOff = (id: number, who: CurrentUser) => callApi(signOffAction, req("POST", `/api/v1/calibrations/${id}/sign-off`, who), { id: String(id) });
const remove = (id: number, attachmentId: number, who: CurrentUser) =>
  callApi(attachmentAction, req("DELETE", `/api/v1/calibrations/${id}/attachments/${attachmentId}`, who), {
    id: String(id),
    attachmentId: String(attachmentId),
  });

const pagePost = (id: number, who: CurrentUser, fields: Record<string, string>) =>
  postPageForm(pageAction as never, `/calibrations/${id}`, who, fields, { id: String(id) });

describe("calibration sign-off by a second person (a lab setting, on by default)", () => {
  it("refuses the lab manager who performed the record with 403 second_person_required; another lab manager signs it", async () => {
    const cal = await record(lab.manager);
    const refused = await signOff(cal.id, lab.manager);
    expect(refused.status).toBe(403);
    expect((await refused.json()).error).toMatchObject({ code: "second_person_required", message: expect.stringMatching(/second person/) });
    expect((await Calibration.findByPk(cal.id))!.signedOffAt).toBeNull();
    const page = await pagePost(cal.id, lab.manager, { intent: "sign-off", confirm: "yes" });
    expect(page.status).toBe(403);
    expect(page.body.problem).toMatch(/another lab manager must check and sign it/);

    const signed = await signOff(cal.id, secondManager);
    expect(signed.status).toBe(200);
    expect(await signed.json()).toMatchObject({ id: cal.id, signedOffById: secondManager.id });
  });

  it("lets the performer sign when the lab turns the rule off", async () => {
    await setSignOffRule("anyone");
    try {
      const cal = await record(lab.manager);
      expect((await signOff(cal.id, lab.manager)).status).toBe(200);
    } finally {
      await setSignOffRule("second_person");
    }
    const again = await record(lab.manager);
    expect((await signOff(again.id, lab.manager)).status).toBe(403);
  });

  it("the page signs off only with the confirmation", async () => {
    const cal = await record(lab.tech);
    const unconfirmed = await pagePost(cal.id, lab.manager, { intent: "sign-off" });
    expect(unconfirmed.status).toBe(400);
    expect(unconfirmed.body.problem).toMatch(/Confirm the sign-off/);
    expect((await Calibration.findByPk(cal.id))!.signedOffAt).toBeNull();
    const confirmed = await pagePost(cal.id, lab.manager, { intent: "sign-off", confirm: "yes" });
    expect(confirmed.body.notice).toMatch(/Signed off/);
    expect((await Calibration.findByPk(cal.id))!.signedOffById).toBe(lab.manager.id);
    // A technician reaches the page's action (to remove files) but never signs off.
    const other = await record(lab.tech);
    await expect(pagePost(other.id, lab.tech, { intent: "sign-off", confirm: "yes" })).rejects.toMatchObject({ init: { status: 403 } });
    expect((await Calibration.findByPk(other.id))!.signedOffAt).toBeNull();
  });
});

describe("removing an attachment before sign-off", () => {
  it("takes the row and its stored file away, with a history line; the API answers with the record", async () => {
    const cal = await record(lab.tech);
    const keep = await addCalibrationAttachment(cal.id, { name: "ruler.png", bytes: png }, lab.tech);
    const wrong = await addCalibrationAttachment(cal.id, { name: "wrong.png", bytes: png }, lab.tech);
    expect(await store().head(calibrationKey(wrong.storedName))).not.toBeNull();

    const answer = await remove(cal.id, wrong.id, lab.tech);
    expect(answer.status).toBe(200);
    expect((await answer.json()).attachments.map((a: { originalName: string }) => a.originalName)).toEqual(["ruler.png"]);
    expect(await CalibrationAttachment.findByPk(wrong.id)).toBeNull();
    expect(await store().head(calibrationKey(wrong.storedName))).toBeNull();
    expect(await store().head(calibrationKey(keep.storedName))).not.toBeNull();
    const line = await CalibrationHistory.findOne({ where: { calibrationId: cal.id, field: "attachmentRemoved" } });
    expect(line).toMatchObject({ userId: lab.tech.id, newValue: "wrong.png" });

    expect((await remove(cal.id, wrong.id, lab.tech)).status).toBe(404);
    // Through the page, by a lab manager.
    const page = await pagePost(cal.id, lab.manager, { intent: "remove-attachment", attachmentId: String(keep.id) });
    expect(page.body.notice).toBe('"ruler.png" removed from this record.');
    expect(await CalibrationAttachment.count({ where: { calibrationId: cal.id } })).toBe(0);
  });

  it("is refused to another technician (403) and once the record is signed (409), keeping the file", async () => {
    const cal = await record(lab.tech);
    const file = await addCalibrationAttachment(cal.id, { name: "certificate.png", bytes: png }, lab.tech);
    const notYours = await remove(cal.id, file.id, lab.otherTech);
    expect(notYours.status).toBe(403);
    expect((await signOff(cal.id, lab.manager)).status).toBe(200);
    const signed = await remove(cal.id, file.id, lab.tech);
    expect(signed.status).toBe(409);
    expect((await signed.json()).error.code).toBe("calibration_signed");
    const page = await pagePost(cal.id, lab.tech, { intent: "remove-attachment", attachmentId: String(file.id) });
    expect(page.status).toBe(409);
    expect(await CalibrationAttachment.findByPk(file.id)).not.toBeNull();
    expect(await store().head(calibrationKey(file.storedName))).not.toBeNull();
  });
});
