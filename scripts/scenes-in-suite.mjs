// The ray-traced scene tests (tests/scenes, own Vitest config) that `npm test` runs, at the end of
// its server lane, rendering missing stacks first. A scene joins once it meets its targets on the
// tracker of the day; all of them run with `npx vitest run --config tests/scenes/vitest.config.ts`,
// and the README's "Conditions Tankside has been tested under" says where the others stand.
/** Files run whole. */
export const sceneTestFilesInSuite = ["tests/scenes/scene-tilt.test.ts"];
/** The scenes scene-tracking.test.ts is run on (TANKSIDE_SCENE_VARIANTS). */
export const trackedScenesInSuite = ["rotating-float", "lab-float", "rotating-float-tilt5", "lab-float-tilt5"];
/**
 * Every stack the tests above read (scene-tilt.test.ts reads the tilted floats): `npm test` renders
 * the missing ones at the start, at low priority, so POV-Ray uses what the other steps leave idle.
 */
export const sceneStacksInSuite = [...new Set(["rotating-float-tilt5", "lab-float-tilt5", ...trackedScenesInSuite])];
