import fsp from "node:fs/promises";
import os from "node:os";
import path from "node:path";

/**
 * A folder under the OS temp dir for files that must exist on this machine for a while (the
 * frames of one tracking job, downloaded from a bucket). Made on first use, so a store that never
 * needs it (the local folder) never makes one; `dispose` removes it with everything in it.
 */
export class ScratchDir {
  private dir: Promise<string> | null = null;

  constructor(private readonly label: string) {}

  path(): Promise<string> {
    this.dir ??= fsp.mkdtemp(path.join(os.tmpdir(), `tankside-${this.label.replace(/[^a-zA-Z0-9-]+/g, "-")}-`));
    return this.dir;
  }

  get made() {
    return this.dir !== null;
  }

  async dispose() {
    const dir = this.dir;
    this.dir = null;
    if (dir) await fsp.rm(await dir, { recursive: true, force: true });
  }
}
