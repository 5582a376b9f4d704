import { afterAll, beforeAll, describe, expect, it } from "vitest";
import crypto from "node:crypto";
import http from "node:http";
import type { AddressInfo } from "node:net";
import zlib from "node:zlib";
import compression from "compression";
import express from "express";
// @ts-expect-error plain ESM module of the server, without type declarations
import { handleWithLimitedBodies } from "../../server-bodies.mjs";

const KiB = 1024;
const chunks = 160;
// Random bytes do not compress, so the gzip stream's buffer fills and the writer waits for 'drain' again and again.
const payload = crypto.randomBytes(chunks * 64 * KiB);

describe("a long answer through the compression middleware", () => {
  let server: http.Server;
  let port = 0;
  let fullWrites = 0;
  let cancelled = 0;

  beforeAll(async () => {
    const app = express();
    app.use(compression());
    // Counts the writes that found the response's buffer full: each makes the writer wait for 'drain'.
    app.use((_req, res, next) => {
      const write = res.write.bind(res) as (...args: unknown[]) => boolean;
      res.write = ((...args: unknown[]) => {
        const ok = write(...args);
        if (!ok) fullWrites++;
        return ok;
      }) as typeof res.write;
      next();
    });
    const handler = (request: Request) => {
      let i = 0;
      const slow = new URL(request.url).pathname === "/slow";
      const body = new ReadableStream<Uint8Array>({
        async pull(controller) {
          if (slow) await new Promise((r) => setTimeout(r, 20));
          if (i >= chunks) return controller.close();
          controller.enqueue(payload.subarray(i * 64 * KiB, (i + 1) * 64 * KiB));
          i++;
        },
        cancel() {
          cancelled++;
        },
      });
      return new Response(body, { headers: { "Content-Type": "application/octet-stream" } });
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

  it("arrives whole and adds no listener per wait (no MaxListenersExceededWarning)", async () => {
    const warnings: Error[] = [];
    const onWarning = (w: Error) => warnings.push(w);
    process.on("warning", onWarning);
    try {
      for (let round = 0; round < 3; round++) {
        const received = await new Promise<Buffer>((resolve, reject) => {
          http
            .get({ host: "127.0.0.1", port, path: "/", headers: { "accept-encoding": "gzip" } }, (res) => {
              expect(res.headers["content-encoding"]).toBe("gzip");
              const parts: Buffer[] = [];
              res
                .pipe(zlib.createGunzip())
                .on("data", (c: Buffer) => parts.push(c))
                .on("end", () => resolve(Buffer.concat(parts)))
                .on("error", reject);
            })
            .on("error", reject);
        });
        expect(received.equals(payload)).toBe(true);
      }
      await new Promise((r) => setTimeout(r, 50));
    } finally {
      process.off("warning", onWarning);
    }
    // The answers did wait for 'drain' well over ten times, so a listener left per wait would have warned.
    expect(fullWrites).toBeGreaterThan(30);
    expect(warnings.filter((w) => w.name === "MaxListenersExceededWarning").map((w) => w.message)).toEqual([]);
  });

  it("stops reading the app's body when the client leaves halfway", async () => {
    const before = cancelled;
    await new Promise<void>((resolve, reject) => {
      const req = http.get({ host: "127.0.0.1", port, path: "/slow", headers: { "accept-encoding": "gzip" } }, (res) => {
        let got = 0;
        res.on("data", (c: Buffer) => {
          got += c.length;
          if (got > 256 * KiB) {
            req.destroy();
            resolve();
          }
        });
      });
      req.on("error", (err) => (req.destroyed ? undefined : reject(err)));
    });
    await expect.poll(() => cancelled, { timeout: 5_000 }).toBe(before + 1);
  });
});
