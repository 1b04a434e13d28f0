// The one lint configuration for the workspace (ESLint 9 flat config): `pnpm lint` (= `eslint .`), also run
// by `npm test` right after the type checks. Besides typescript-eslint and the React hooks rules, it holds
// the import boundaries (DEVELOPERS.md, "Console architecture" and "Server architecture"):
//   console  features/X never imports features/Y; features never import app/; components/ and lib/
//            import neither features/ nor app/ (app/ — router and shell — may import anything);
//   server   a module reaches another module only through its service (modules/Y/service.ts), never
//            its data access (model.ts, models, queries);
//   packages never import apps/; and no import cycles anywhere.
import { readdirSync } from "node:fs";
import js from "@eslint/js";
import tseslint from "typescript-eslint";
import reactHooks from "eslint-plugin-react-hooks";
import { createNodeResolver, importX } from "eslint-plugin-import-x";
import globals from "globals";

const CONSOLE = "./apps/console/src";
const SERVER_MODULES = "./apps/server/src/modules";

/** Sub-folders of a folder (features, modules), read at lint time so a new one is covered at once. */
const foldersIn = (path) => {
  try {
    return readdirSync(new URL(path, import.meta.url), { withFileTypes: true })
      .filter((entry) => entry.isDirectory())
      .map((entry) => entry.name);
  } catch {
    return [];
  }
};

const featureZones = foldersIn(`${CONSOLE}/features`).map((feature) => ({
  target: `${CONSOLE}/features/${feature}`,
  from: `${CONSOLE}/features`,
  except: [`./${feature}`],
  message: "A feature imports only from components/, lib/ and packages/*: move what both need to components/ or lib/.",
}));

const serverModuleZones = foldersIn(SERVER_MODULES).map((module) => ({
  target: `${SERVER_MODULES}/!(${module})/**/*`,
  from: [`${SERVER_MODULES}/${module}/@(model|models|queries).ts`, `${SERVER_MODULES}/${module}/models/**/*`],
  message: `Another module reaches "${module}" only through its service (modules/${module}/service.ts), never its data access.`,
}));

export default tseslint.config(
  {
    ignores: ["**/node_modules/**", "**/dist/**", "**/coverage/**", ".data/**", "**/test-results/**", "**/playwright-report/**", "tests/artifacts/**"],
  },
  js.configs.recommended,
  tseslint.configs.recommended,
  {
    languageOptions: { ecmaVersion: 2024, sourceType: "module", globals: { ...globals.node } },
    linterOptions: { reportUnusedDisableDirectives: "error" },
    rules: {
      // `_`-prefixed names mark a parameter or binding that is deliberately unused (a callback's shape).
      "@typescript-eslint/no-unused-vars": ["error", { argsIgnorePattern: "^_", varsIgnorePattern: "^_", caughtErrors: "none" }],
    },
  },
  {
    files: ["apps/console/**/*.{ts,tsx}"],
    languageOptions: { globals: { ...globals.browser } },
    plugins: { "react-hooks": reactHooks },
    rules: {
      ...reactHooks.configs["recommended-latest"].rules,
      // A missing dependency is a stale value on screen: an error, not a warning nobody reads.
      "react-hooks/exhaustive-deps": "error",
      // Informs that a library (TanStack Table, react-hook-form's watch) opts a component out of the React
      // Compiler; we do not run the compiler, so there is nothing to act on.
      "react-hooks/incompatible-library": "off",
    },
  },
  {
    files: ["tests/**/*.ts"],
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
  },
  {
    files: ["**/*.{ts,tsx,js,mjs}"],
    plugins: { "import-x": importX },
    settings: {
      "import-x/resolver-next": [createNodeResolver({ extensions: [".ts", ".tsx", ".js", ".mjs", ".json"] })],
    },
    rules: {
      "import-x/no-cycle": ["error", { ignoreExternal: true }],
      "import-x/no-restricted-paths": [
        "error",
        {
          zones: [
            ...featureZones,
            {
              target: `${CONSOLE}/features`,
              from: `${CONSOLE}/app`,
              message: "Features do not import app/ (router, shell): app/ imports features, not the other way.",
            },
            {
              target: [`${CONSOLE}/components`, `${CONSOLE}/lib`],
              from: [`${CONSOLE}/features`, `${CONSOLE}/app`],
              message: "components/ and lib/ are shared by every feature: they import neither features/ nor app/.",
            },
            ...serverModuleZones,
            { target: "./packages", from: "./apps", message: "Packages are used by the apps and never import them." },
          ],
        },
      ],
    },
  },
);
