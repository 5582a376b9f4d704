import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { callApi } from "../../../tests/support/api-contract";
import { Equipment, sequelize } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { createCalibration, signOffCalibration, toDayString } from "~/.server/calibrations";
import { smallLab } from "~/.server/test-support";
import { loader } from "./calibrations";

// GET /api/v1/calibrations filters as the calibrations page does: kind, standing and search text,
// beside the item (equipmentId) it always took. Every answer is held to the OpenAPI document by callApi.
let lab: Awaited<ReturnType<typeof smallLab>>;
let token: string;
let signedId: number;
let draftId: number;
let otherTableDraftId: number;

beforeAll(async () => {
  lab = await smallLab();
  token = (await createApiToken(lab.instructor.id, "list filters")).token;
  const meter = await Equipment.create({ kind: "rate_meter", name: "Filter test tachometer", meterType: "tachometer" } as never);
  const other = await Equipment.create({
    kind: "table",
    name: "Filter test second table",
    diameterM: 0.6,
    maxRateRpm: 30,
    flatTable: false,
    rateTolerancePct: 1,
  } as never);
  const rate = (equipmentId: number, notes: string) =>
    createCalibration(
      {
        kind: "rate",
        equipmentId,
        meterId: meter.id,
        performedOn: toDayString(new Date(Date.now() - 86_400_000)),
        readings: [5, 10, 15].map((s) => ({ setRpm: s, measuredRpm: s })),
        notes,
      },
      lab.tech,
    );
  signedId = (await rate(lab.table.id, "Belt replaced before this check")).id;
  await signOffCalibration(signedId, lab.manager);
  draftId = (await rate(lab.table.id, "Routine check, strobe at the rim")).id;
  otherTableDraftId = (await rate(other.id, "New table commissioned")).id;
});
afterAll(() => sequelize.close());

const list = async (query: string) => {
  const res = await callApi(loader, new Request(`http://localhost/api/v1/calibrations${query}`, { headers: { Authorization: `Bearer ${token}` } }));
  return { status: res.status, body: (await res.json()) as unknown };
};
const ids = (body: unknown) => (body as { id: number }[]).map((r) => r.id).filter((id) => [signedId, draftId, otherTableDraftId].includes(id));

describe("GET /api/v1/calibrations filters", () => {
  it("keeps filtering by equipmentId and answers every record without filters", async () => {
    expect(ids((await list("")).body).sort()).toEqual([signedId, draftId, otherTableDraftId].sort());
    expect(ids((await list(`?equipmentId=${lab.table.id}`)).body).sort()).toEqual([signedId, draftId].sort());
  });

  it("filters by standing, kind and search text, and combines them", async () => {
    expect(ids((await list("?standing=draft")).body).sort()).toEqual([draftId, otherTableDraftId].sort());
    expect(ids((await list("?standing=in_force")).body)).toEqual([signedId]);
    expect(ids((await list("?kind=scale")).body)).toEqual([]);
    expect(ids((await list("?kind=rate&q=STROBE")).body)).toEqual([draftId]);
    expect(ids((await list(`?standing=draft&equipmentId=${lab.table.id}`)).body)).toEqual([draftId]);
    // A blank value is "any", as on the page.
    expect(ids((await list("?kind=&standing=&q=")).body).sort()).toEqual([signedId, draftId, otherTableDraftId].sort());
  });

  it("refuses a value it cannot mean with 400 invalid_filter naming the field and what can be used", async () => {
    const kind = await list("?kind=pressure");
    expect(kind.status).toBe(400);
    expect(kind.body).toMatchObject({ error: { code: "invalid_filter", field: "kind" } });
    expect(JSON.stringify(kind.body)).toContain("rate");
    const standing = await list("?standing=old");
    expect(standing.status).toBe(400);
    expect(standing.body).toMatchObject({ error: { code: "invalid_filter", field: "standing" } });
    const long = await list(`?q=${"x".repeat(101)}`);
    expect(long.status).toBe(400);
    expect(long.body).toMatchObject({ error: { code: "invalid_filter", field: "q" } });
  });
});
