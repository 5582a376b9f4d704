// The ray-traced scene tests (tests/scenes, own Vitest config) that `npm test` runs, at the end of
// its server lane. A file joins the list once it meets its targets on the tracker of the day; the
// others run with `npx vitest run --config tests/scenes/vitest.config.ts` and the README's
// "Conditions Tankside has been tested under" says where they stand.
export const sceneTestsInSuite = ["tests/scenes/scene-tilt.test.ts"];
