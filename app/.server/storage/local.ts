import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { assertKey, assertPrefix } from "./keys";
import type { ObjectInfo, ObjectStore, OpenedObject } from "./types";

const isMissing = (err: unknown) => ["ENOENT", "ENOTDIR"].includes((err as NodeJS.ErrnoException)?.code ?? "");

/**
 * The default store: a folder on this machine (UPLOADS_DIR), one file per object at the key's
 * path, so `runs/7/<name>` is `<UPLOADS_DIR>/runs/7/<name>` as it always was.
 */
export class LocalStore implements ObjectStore {
  readonly kind = "local" as const;
  readonly where: string;

  constructor(readonly root: string) {
    this.where = `the folder ${root}`;
  }

  /** The file of a key; keys are checked, so the path stays inside the root. */
  fileOf(key: string) {
    return path.join(this.root, ...assertKey(key).split("/"));
  }

  async put(key: string, data: Buffer) {
    const file = this.fileOf(key);
    await fsp.mkdir(path.dirname(file), { recursive: true });
    // Written beside and renamed, so a reader never sees half an object; a crash leaves an
    // unreferenced file that the orphan sweep removes.
    const temp = `${file}.${crypto.randomUUID()}.part`;
    try {
      await fsp.writeFile(temp, data, { flag: "wx" });
      await fsp.rename(temp, file);
    } catch (err) {
      await fsp.rm(temp, { force: true });
      throw err;
    }
  }

  /** Same volume: a rename; otherwise a copy, then the original goes. */
  async putFile(key: string, from: string) {
    const file = this.fileOf(key);
    await fsp.mkdir(path.dirname(file), { recursive: true });
    try {
      await fsp.rename(from, file);
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== "EXDEV") throw err;
      await fsp.copyFile(from, file, fs.constants.COPYFILE_EXCL);
      await fsp.rm(from, { force: true });
    }
  }

  async get(key: string) {
    try {
      return await fsp.readFile(this.fileOf(key));
    } catch (err) {
      if (isMissing(err)) return null;
      throw err;
    }
  }

  async open(key: string): Promise<OpenedObject | null> {
    const file = this.fileOf(key);
    let handle: fsp.FileHandle;
    try {
      handle = await fsp.open(file, "r");
    } catch (err) {
      if (isMissing(err)) return null;
      throw err;
    }
    try {
      const stat = await handle.stat();
      if (!stat.isFile()) {
        await handle.close();
        return null;
      }
      // The stream owns the handle from here and closes it when done or destroyed.
      return { body: handle.createReadStream(), size: stat.size };
    } catch (err) {
      await handle.close();
      throw err;
    }
  }

  async head(key: string): Promise<ObjectInfo | null> {
    try {
      const stat = await fsp.stat(this.fileOf(key));
      return stat.isFile() ? { key, size: stat.size, modified: stat.mtime } : null;
    } catch (err) {
      if (isMissing(err)) return null;
      throw err;
    }
  }

  async delete(key: string) {
    await fsp.rm(this.fileOf(key), { force: true });
  }

  async list(prefix: string): Promise<ObjectInfo[]> {
    assertPrefix(prefix);
    const out: ObjectInfo[] = [];
    const walk = async (dir: string, keyPrefix: string) => {
      let entries: fs.Dirent[];
      try {
        entries = await fsp.readdir(dir, { withFileTypes: true });
      } catch (err) {
        if (isMissing(err)) return;
        throw err;
      }
      for (const e of entries) {
        const full = path.join(dir, e.name);
        if (e.isDirectory()) await walk(full, `${keyPrefix}${e.name}/`);
        else if (e.isFile()) {
          const stat = await fsp.stat(full).catch(() => null);
          if (stat) out.push({ key: `${keyPrefix}${e.name}`, size: stat.size, modified: stat.mtime });
        }
      }
    };
    await walk(path.join(this.root, ...prefix.slice(0, -1).split("/")), prefix);
    return out;
  }

  /** The object's own file: nothing is copied, and a missing file is found by whoever reads it. */
  async localPath(key: string) {
    return this.fileOf(key);
  }

  /** The folder is made when the first file is written, as before: nothing to check at start. */
  async startupProblem() {
    return null;
  }
}
