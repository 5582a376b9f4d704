/**
 * `npm run scenes`: renders the ray-traced test scenes (tests/fixtures/scenes) once into the cache
 * (TANKSIDE_SCENE_CACHE, default node_modules/.cache/tankside-scenes) and prints one JSON line per
 * variant: its folder, frames, and the seconds the render took (null when it was already cached).
 * `npm run scenes -- rotating-float lab-dye` renders only those; `--prune` then removes the
 * cached renders of earlier scene files.
 */
import { sceneVariants, variantsNamed } from "../tests/fixtures/scenes/scene-model";
import { rm } from "node:fs/promises";
import { ensureSceneStack, staleStackDirs } from "../tests/fixtures/scenes/render-scene-stack";

async function main(): Promise<void> {
  const variants = variantsNamed(process.argv.slice(2));
  for (const variant of variants) {
    const stack = await ensureSceneStack(variant, (m) => process.stderr.write(`${m}\n`));
    process.stdout.write(
      `${JSON.stringify({ scene: variant.name, dir: stack.dir, frames: stack.files.length, renderSeconds: stack.renderSeconds === null ? null : Number(stack.renderSeconds.toFixed(1)) })}\n`,
    );
  }
  if (process.argv.includes("--prune")) {
    for (const dir of await staleStackDirs(sceneVariants)) {
      process.stderr.write(`removing ${dir}\n`);
      await rm(dir, { recursive: true, force: true });
    }
  }
}

main().catch((error: unknown) => {
  process.stderr.write(`${error instanceof Error ? error.message : String(error)}\n`);
  process.exit(1);
});
