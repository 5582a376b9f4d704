import { describe, expect, it } from "vitest";
import { tiltedCamera } from "../../../tests/fixtures/tilted-camera";
import { viewSetupSchema } from "./view-setup";

const camera = tiltedCamera(5, 30);
const centre = camera.project({ x: 0, y: 0 });
const rim = Array.from({ length: 8 }, (_, i) => camera.project({ x: 14 * Math.cos((i * Math.PI) / 4), y: 14 * Math.sin((i * Math.PI) / 4) }));
const base = { centreX: String(centre.x), centreY: String(centre.y), mirrored: "" };
const issues = (input: Record<string, string>) => {
  const r = viewSetupSchema.safeParse({ ...base, ...input });
  return r.success ? [] : r.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`);
};

describe("the view setup's tilt marks (Decision 69)", () => {
  it("accepts eight rim points on an ellipse about the centre, and none at all", () => {
    expect(issues({ rimPoints: JSON.stringify(rim) })).toEqual([]);
    expect(issues({ rimPoints: "" })).toEqual([]);
  });

  it("puts a message on the field for too few points, points in a line, unreadable points, and both kinds at once", () => {
    expect(issues({ rimPoints: JSON.stringify(rim.slice(0, 4)) })).toEqual(["rimPoints: An ellipse needs at least five points on the rim; 4 were given."]);
    const line = [0, 1, 2, 3, 4].map((i) => ({ x: 100 + 20 * i, y: 50 + 10 * i }));
    expect(issues({ rimPoints: JSON.stringify(line) })).toEqual(["rimPoints: The rim points lie in a line; mark them around the rim."]);
    expect(issues({ rimPoints: '[{"x": 1}]' })).toEqual(["rimPoints: Each rim point needs a column and a row in pixels."]);
    expect(issues({ rimPoints: "not json" })).toEqual(["rimPoints: Each rim point needs a column and a row in pixels."]);
    const known = [
      { x: 1, y: 2, tableXCm: 10, tableYCm: 0 },
      { x: 3, y: 4, tableXCm: 0, tableYCm: 10 },
      { x: 5, y: 9, tableXCm: -10, tableYCm: 0 },
      { x: 8, y: 1, tableXCm: 0, tableYCm: -10 },
    ];
    expect(issues({ rimPoints: JSON.stringify(rim), knownPoints: JSON.stringify(known) })).toEqual([
      "knownPoints: Correct the tilt from the rim points or from known points, not both: clear one of them.",
    ]);
  });

  it("refuses a rotation centre outside the rim's ellipse on the rim field", () => {
    expect(viewSetupSchema.safeParse({ ...base, centreX: "5", centreY: "5", rimPoints: JSON.stringify(rim) }).error?.issues[0]?.path).toEqual(["rimPoints"]);
  });

  it("known points: accepts four seen by the tilted camera; names the one without a table position, too few, repeats and a line", () => {
    const table = [
      { x: 10, y: 0 },
      { x: 0, y: 10 },
      { x: -10, y: 0 },
      { x: 0, y: -10 },
    ];
    const known = table.map((t) => ({ ...camera.project(t), tableXCm: t.x, tableYCm: t.y }));
    expect(issues({ knownPoints: JSON.stringify(known) })).toEqual([]);
    expect(issues({ knownPoints: JSON.stringify(known.map((k, i) => (i === 1 ? { ...k, tableXCm: null } : k))) })).toEqual([
      "knownPoints: Known point 2 needs its place on the table: x and y in cm, as numbers.",
    ]);
    expect(issues({ knownPoints: JSON.stringify(known.slice(0, 3)) })).toEqual([
      "knownPoints: A correction from known points needs at least 4 of them; 3 are placed.",
    ]);
    expect(issues({ knownPoints: JSON.stringify([...known.slice(0, 3), { ...known[0]!, tableXCm: 5, tableYCm: 5 }]) })).toEqual([
      "knownPoints: Known points 1 and 4 are on the same spot of the frame; remove one and click another mark.",
    ]);
    const line = known.map((k, i) => ({ ...k, x: 100 + 30 * i, y: 80 + 10 * i }));
    expect(issues({ knownPoints: JSON.stringify(line) })).toEqual([
      "knownPoints: The known points lie in one line in the frame; pick marks spread around the tank.",
    ]);
  });
});
