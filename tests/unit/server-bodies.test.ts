import { afterAll, beforeAll, describe, expect, it } from "vitest";
import http from "node:http";
import type { AddressInfo } from "node:net";
import { Readable } from "node:stream";
import express from "express";
import {
  bodyLimitFor,
  bodyLimits,
  closeUnreadUploads,
  handleWithLimitedBodies,
  limitedBody,
  MULTIPART_ALLOWANCE_BYTES,
  refuseOversizedBodies,
  // @ts-expect-error plain ESM module of the server, without type declarations
} from "../../server-bodies.mjs";
import { maxUploadBodyBytes, MULTIPART_ALLOWANCE_BYTES as APP_MULTIPART_ALLOWANCE_BYTES, uploadLimits } from "~/lib/upload-limits";
import { MAX_ATTACHMENT_BYTES } from "~/.server/uploads/calibration-attachments";
import { runSchema } from "~/lib/validation/run";
import { calibrationSchema } from "~/lib/validation/calibrations";

type Limit = { bytes: number; message: string };
const KiB = 1024;
const MiB = 1024 * KiB;

/** A source that makes its bytes only when asked, so a test can see how much was read. */
function countingSource(total: number, chunk = 16 * KiB) {
  const block = Buffer.alloc(chunk, 0x61);
  const state = { produced: 0 };
  const stream = new Readable({
    read() {
      if (state.produced >= total) return void this.push(null);
      const n = Math.min(chunk, total - state.produced);
      state.produced += n;
      this.push(n === chunk ? block : block.subarray(0, n));
    },
  });
  return { stream, state };
}

async function readAll(body: ReadableStream<Uint8Array>) {
  const chunks: Uint8Array[] = [];
  const reader = body.getReader();
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    chunks.push(value);
  }
  return Buffer.concat(chunks);
}

describe("the limits per path", () => {
  it("match the upload limits the app states (the frame, ZIP and attachment maxima plus multipart framing)", () => {
    expect(MULTIPART_ALLOWANCE_BYTES).toBe(APP_MULTIPART_ALLOWANCE_BYTES);
    expect(bodyLimits.frameUpload.bytes).toBe(maxUploadBodyBytes("frame"));
    expect(bodyLimits.frameUpload.bytes).toBe(uploadLimits.maxFrameBytes + MULTIPART_ALLOWANCE_BYTES);
    expect(bodyLimits.zipUpload.bytes).toBe(maxUploadBodyBytes("zip"));
    expect(bodyLimits.zipUpload.bytes).toBe(uploadLimits.maxZipBytes + MULTIPART_ALLOWANCE_BYTES);
    expect(bodyLimits.calibrationAttachment.bytes).toBe(MAX_ATTACHMENT_BYTES + MULTIPART_ALLOWANCE_BYTES);
    expect(bodyLimits.form.bytes).toBe(64 * KiB);
  });

  it("give the upload limits only to POSTs of the two upload addresses", () => {
    expect(bodyLimitFor("POST", "/api/v1/runs/12/frames")).toBe(bodyLimits.frameUpload);
    expect(bodyLimitFor("POST", "/api/v1/runs/12/frames", "kind=zip")).toBe(bodyLimits.zipUpload);
    expect(bodyLimitFor("POST", "/api/v1/runs/12/frames", "kind=frame")).toBe(bodyLimits.frameUpload);
    // Said twice or unknown: the smaller limit (the app refuses such a query itself).
    expect(bodyLimitFor("POST", "/api/v1/runs/12/frames", "kind=zip&kind=zip")).toBe(bodyLimits.frameUpload);
    expect(bodyLimitFor("POST", "/api/v1/runs/12/frames", "kind=ZIP")).toBe(bodyLimits.frameUpload);
    expect(bodyLimitFor("POST", "/api/v1/calibrations/3/attachments")).toBe(bodyLimits.calibrationAttachment);
    expect(bodyLimitFor("PUT", "/api/v1/runs/12/frames")).toBe(bodyLimits.form);
    expect(bodyLimitFor("POST", "/api/v1/runs/12/frames/extra")).toBe(bodyLimits.form);
    expect(bodyLimitFor("POST", "/sign-in")).toBe(bodyLimits.form);
    expect(bodyLimitFor("POST", "/api/v1/runs")).toBe(bodyLimits.form);
  });

  it("leave room for the largest real forms, filled to their maxima in 3-byte characters", () => {
    const wide = (n: number) => "水".repeat(n);
    const run = {
      tableId: "1",
      tankId: "2",
      cameraId: "3",
      setRateRpm: "30.5",
      direction: "ccw",
      waterDepthCm: "12.5",
      waterTemperatureC: "20.1",
      rateReachedAt: "2026-12-02T10:00:00.000Z",
      rateReachedAtLocal: "2026-12-02T10:00",
      cameraMode: "rotating",
      frameRateFps: "30",
      tracer: "float",
      purpose: wide(300),
      notes: wide(5000),
      supersedesId: "17",
    };
    expect(runSchema.safeParse(run).success).toBe(true);
    const runBytes = new URLSearchParams(run).toString().length;
    const calibration: Record<string, string> = {
      kind: "rate",
      equipmentId: "1",
      performedOn: "2026-12-01",
      dueOn: "2027-06-01",
      notes: wide(4000),
      meterId: "4",
    };
    for (let i = 0; i < 8; i++) {
      calibration[`readings[${i}].setRpm`] = "120.125";
      calibration[`readings[${i}].measuredRpm`] = "119.987";
    }
    const calBytes = new URLSearchParams(calibration).toString().length;
    expect(runBytes).toBeGreaterThan(45_000);
    expect(Math.max(runBytes, calBytes)).toBeLessThan(bodyLimits.form.bytes * 0.8);
    void calibrationSchema;
  });
});

describe("limitedBody", () => {
  const limit: Limit = { bytes: 256 * KiB, message: "At most 256 KiB." };

  it("refuses a chunked body past the limit after reading little more than the limit", async () => {
    const { stream, state } = countingSource(50 * MiB);
    let refusals = 0;
    const body = limitedBody(stream, limit, () => refusals++);
    await expect(readAll(body)).rejects.toMatchObject({ code: "too_large", status: 413 });
    expect(refusals).toBe(1);
    expect(state.produced).toBeGreaterThan(limit.bytes);
    expect(state.produced).toBeLessThan(limit.bytes + 64 * KiB);
  });

  it("passes a body under the limit through intact, and one of exactly the limit", async () => {
    const source = Readable.from([Buffer.from("email=tech%40tankside.example&"), Buffer.from("password=correct-horse")]);
    expect((await readAll(limitedBody(source, limit))).toString()).toBe("email=tech%40tankside.example&password=correct-horse");
    const exact = countingSource(limit.bytes);
    const bytes = await readAll(limitedBody(exact.stream, limit));
    expect(bytes.length).toBe(limit.bytes);
    expect(bytes.every((b) => b === 0x61)).toBe(true);
  });

  it("errors instead of ending when the client goes away mid-body", async () => {
    const source = new Readable({ read() {} });
    const body = limitedBody(source, limit);
    source.push(Buffer.from("email=tech%40tank"));
    setImmediate(() => source.destroy());
    await expect(readAll(body)).rejects.toMatchObject({ code: "body_aborted" });
  });
});

describe("refuseOversizedBodies", () => {
  function call(path: string, headers: Record<string, string>) {
    const out = { status: 0, headers: {} as Record<string, string>, body: undefined as unknown, passed: false, type: "" };
    const h = Object.fromEntries(Object.entries(headers).map(([k, v]) => [k.toLowerCase(), v]));
    let reads = 0;
    const req = {
      method: "POST",
      path: path.split("?")[0],
      originalUrl: path,
      get: (n: string) => h[n.toLowerCase()],
      read: () => reads++,
      on: () => reads++,
      socket: {},
    };
    const res = {
      headersSent: false,
      setHeader(k: string, v: string) {
        out.headers[k.toLowerCase()] = v;
      },
      status(c: number) {
        out.status = c;
        return res;
      },
      type(t: string) {
        out.type = t;
        return res;
      },
      json(b: unknown) {
        out.body = b;
        return res;
      },
      send(b: unknown) {
        out.body = b;
        return res;
      },
    };
    refuseOversizedBodies(req, res, () => {
      out.passed = true;
    });
    return { out, reads };
  }

  it("refuses a Content-Length over the limit before reading anything: JSON for the API, plain text for a page", () => {
    const api = call("/api/v1/runs/4/frames", { "content-length": String(bodyLimits.frameUpload.bytes + 1) });
    expect(api.out).toMatchObject({ status: 413, passed: false, body: { error: { code: "too_large" } } });
    expect(api.out.headers.connection).toBe("close");
    expect(api.reads).toBe(0);
    // One frame is refused over its own limit, a ZIP of the same size is let through to be read.
    const frame = call("/api/v1/runs/4/frames", { "content-length": String(bodyLimits.frameUpload.bytes + 1) });
    expect(frame.out).toMatchObject({ status: 413, passed: false, body: { error: { code: "too_large", message: expect.stringContaining("kind=zip") } } });
    expect(frame.reads).toBe(0);
    expect(call("/api/v1/runs/4/frames?kind=zip", { "content-length": String(bodyLimits.frameUpload.bytes + 1) }).out.passed).toBe(true);
    const zip = call("/api/v1/runs/4/frames?kind=zip", { "content-length": String(bodyLimits.zipUpload.bytes + 1) });
    expect(zip.out).toMatchObject({ status: 413, passed: false });
    expect(zip.reads).toBe(0);
    const page = call("/sign-in", { "content-length": String(300 * MiB) });
    expect(page.out).toMatchObject({ status: 413, passed: false, type: "text/plain" });
    expect(String(page.out.body)).toContain("64 KiB");
    expect(page.reads).toBe(0);
  });

  it("lets a declared length at the limit through", () => {
    expect(call("/sign-in", { "content-length": String(64 * KiB) }).out.passed).toBe(true);
    expect(call("/api/v1/calibrations/2/attachments", { "content-length": String(20 * MiB) }).out.passed).toBe(true);
  });
});

describe("an express server with the real body middleware", () => {
  let server: http.Server;
  let port = 0;
  const seen: string[] = [];
  const waiting: ((outcome: string) => void)[] = [];
  const record = (outcome: string) => {
    seen.push(outcome);
    waiting.shift()?.(outcome);
  };
  let readWhenAnswered = -1;

  beforeAll(async () => {
    const app = express();
    app.use((req, res, next) => {
      res.on("finish", () => (readWhenAnswered = req.socket.bytesRead));
      next();
    });
    app.use(closeUnreadUploads);
    app.use(refuseOversizedBodies);
    // Stands in for the sign-in action: it reads the whole form before any check.
    const handler = async (request: Request) => {
      try {
        const form = await request.formData();
        record(`complete:${String(form.get("email"))}`);
        return new Response("signed in");
      } catch (err) {
        record(`refused:${(err as { code?: string }).code ?? (err as { cause?: { code?: string } }).cause?.code ?? "?"}`);
        return new Response("bad form", { status: 400 });
      }
    };
    app.all(
      "/{*splat}",
      handleWithLimitedBodies(handler, () => ({})),
    );
    server = app.listen(0, "127.0.0.1");
    await new Promise((r) => server.once("listening", r));
    port = (server.address() as AddressInfo).port;
  });
  afterAll(() => new Promise((r) => server.close(r)));

  /** Streams `total` bytes chunked (no Content-Length) and stops sending once an answer comes. */
  function streamedPost(path: string, total: number, opts: { abortAfter?: number; block?: number } = {}) {
    return new Promise<{ status: number; body: string; headers: http.IncomingHttpHeaders; sent: number }>((resolve, reject) => {
      const block = Buffer.alloc(opts.block ?? 64 * KiB, 0x61);
      let sent = 0;
      let answered = false;
      const req = http.request({ host: "127.0.0.1", port, path, method: "POST", headers: { "content-type": "application/x-www-form-urlencoded" } });
      req.on("response", (res) => {
        answered = true;
        let body = "";
        res.setEncoding("utf8");
        res.on("data", (c) => (body += c));
        res.on("end", () => {
          resolve({ status: res.statusCode ?? 0, body, headers: res.headers, sent });
          req.destroy();
        });
      });
      req.on("error", (err) => {
        if (!answered) reject(err);
      });
      req.write("email=a%40tankside.example&x=");
      const pump = () => {
        while (!answered && sent < total) {
          if (opts.abortAfter !== undefined && sent >= opts.abortAfter) return void req.destroy();
          sent += block.length;
          if (!req.write(block)) return void req.once("drain", pump);
        }
        if (!answered) req.end();
      };
      pump();
    });
  }

  it("answers 413 to a 300 MB streamed POST to /sign-in after reading little more than 64 KiB", async () => {
    seen.length = 0;
    const res = await streamedPost("/sign-in", 300 * MiB);
    expect(res.status).toBe(413);
    expect(res.headers["content-type"]).toMatch(/text\/plain/);
    expect(res.headers.connection).toBe("close");
    expect(res.body).toContain("at most 64 KiB");
    expect(readWhenAnswered).toBeLessThan(1 * MiB);
    expect(res.sent).toBeLessThan(300 * MiB);
    expect(seen).toEqual(["refused:too_large"]);
  });

  it("answers 413 in JSON to an API client", async () => {
    const res = await streamedPost("/api/v1/runs", 2 * MiB);
    expect(res.status).toBe(413);
    expect(JSON.parse(res.body)).toEqual({ error: { code: "too_large", message: "Forms and JSON bodies may be at most 64 KiB." } });
  });

  it("hands a body under the limit to the app whole", async () => {
    seen.length = 0;
    const res = await streamedPost("/sign-in", 0);
    expect(res.status).toBe(200);
    expect(seen).toEqual(["complete:a@tankside.example"]);
  });

  it("never hands the app a cut-off body as complete when the client leaves mid-upload", async () => {
    seen.length = 0;
    const outcome = new Promise<string>((resolve) => waiting.push(resolve));
    const client = streamedPost("/sign-in", 48 * KiB, { block: 8 * KiB, abortAfter: 24 * KiB }).catch(() => null);
    expect(await outcome).toBe("refused:body_aborted");
    await client;
    expect(seen).toEqual(["refused:body_aborted"]);
  });
});
