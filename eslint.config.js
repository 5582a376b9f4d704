// ESLint 9 flat config (see the lint Decision in DEVELOPERS.md): typescript-eslint with type
// information, the Rules of Hooks and the React Compiler's checks, jsx-a11y on the components.
// `npm run lint` runs `react-router typegen` first: without the generated route types every
// loader and action argument is `any`.
import js from "@eslint/js";
import jsxA11y from "eslint-plugin-jsx-a11y";
import reactHooks from "eslint-plugin-react-hooks";
import { defineConfig, globalIgnores } from "eslint/config";
import globals from "globals";
import tseslint from "typescript-eslint";

export default defineConfig([
  globalIgnores(["build/", "build-*/", "node_modules/", "uploads/", ".react-router/", "test-results/", "playwright-report/", "tests/.tmp/", "**/*.d.mts"]),
  {
    linterOptions: { reportUnusedDisableDirectives: "error" },
    languageOptions: {
      globals: { ...globals.node, ...globals.browser },
      parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname },
    },
  },
  js.configs.recommended,
  tseslint.configs.recommendedTypeChecked,
  {
    rules: {
      // React Router's way to answer from a loader or action is to throw a Response (redirect(),
      // apiError()) or data(); those are not errors and carry no stack on purpose.
      "@typescript-eslint/only-throw-error": [
        "error",
        {
          allow: [
            { from: "lib", name: "Response" },
            { from: "package", package: "react-router", name: "DataWithResponseInit" },
          ],
        },
      ],
      // An async function with no await is the normal way to implement a promise-returning interface
      // (storage backends, test stubs); no-floating-promises and no-misused-promises catch the real bugs.
      "@typescript-eslint/require-await": "off",
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_", destructuredArrayIgnorePattern: "^_" }],
    },
  },
  {
    // Loaders and actions answer by throwing notFound() and the like, which return a Response (API) or
    // data() (pages). The allow list above matches each member of a union against one entry, so a
    // helper that returns either cannot be allowed; here the rule is off rather than disabled at each call.
    files: ["app/routes/**", "app/.server/**"],
    ignores: ["**/*.test.ts"],
    rules: { "@typescript-eslint/only-throw-error": "off" },
  },
  {
    // Tests read response bodies and CLI output as untyped JSON (`await res.json()` is `any`) and
    // check their shape with expect(), whose asymmetric matchers are `any` too; the no-unsafe-* rules
    // would ask for a cast on nearly every assertion without catching anything the assertion does not.
    files: ["**/*.test.ts", "tests/**/*.ts"],
    rules: {
      "@typescript-eslint/no-unsafe-assignment": "off",
      "@typescript-eslint/no-unsafe-member-access": "off",
      "@typescript-eslint/no-unsafe-call": "off",
      "@typescript-eslint/no-unsafe-argument": "off",
      "@typescript-eslint/no-unsafe-return": "off",
      // A crash in the attack tests is whatever was thrown, printed as is in the failure message.
      "@typescript-eslint/no-base-to-string": "off",
    },
  },
  {
    // The .mjs files (server, test runner, scripts) are plain JavaScript outside tsconfig's program.
    files: ["**/*.{js,mjs,cjs}"],
    extends: [tseslint.configs.disableTypeChecked],
  },
  {
    files: ["**/*.tsx"],
    extends: [reactHooks.configs.flat.recommended, jsxA11y.flatConfigs.recommended],
    rules: { "react-hooks/exhaustive-deps": "error" },
  },
  {
    // Hooks also live in .ts modules; only the Rules of Hooks apply there (the compiler rules look at components).
    files: ["**/*.ts"],
    plugins: { "react-hooks": reactHooks },
    rules: { "react-hooks/rules-of-hooks": "error", "react-hooks/exhaustive-deps": "error" },
  },
]);
