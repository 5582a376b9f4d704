// The ray-traced scene tests (tests/scenes, own Vitest config) that `npm test` runs, at the end of
// its server lane, rendering missing stacks first. A scene joins once it meets its targets on the
// tracker of the day; all of them run with `npx vitest run --config tests/scenes/vitest.config.ts`,
// and the README's "Conditions Tankside has been tested under" says where the others stand.
/** Files run whole. */
export const sceneTestFilesInSuite = ["tests/scenes/scene-tilt.test.ts"];
/** The scenes scene-tracking.test.ts is run on (TANKSIDE_SCENE_VARIANTS). */
export const trackedScenesInSuite = ["rotating-float", "lab-float"];
