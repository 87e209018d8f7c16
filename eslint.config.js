// ESLint: rules that find bugs. Layout and spacing are Prettier's (.prettierrc.json), so no style
// rule is on here. Type-aware rules read the one tsconfig.json through the project service.
import js from "@eslint/js";
import jsxA11y from "eslint-plugin-jsx-a11y";
import reactHooks from "eslint-plugin-react-hooks";
import globals from "globals";
import tseslint from "typescript-eslint";

export default tseslint.config(
  {
    ignores: [
      "dist/**",
      "build/**",
      "node_modules/**",
      "coverage/**",
      "tests/.artifacts/**",
      "uploads/**",
      "drizzle/**",
      "public/**",
      "data/**",
      "backups/**",
      // Scratch folders and files (.gitignore keeps them out of the tree; other sessions use them).
      ".probe-*/**",
      ".scratch*/**",
      "scratch-*/**",
      "tmp-*/**",
      "**/*.tmp.*",
      "**/*-tmp.*",
      "ft-tmp*",
    ],
  },
  {
    linterOptions: { reportUnusedDisableDirectives: "error" },
  },

  js.configs.recommended,
  tseslint.configs.recommendedTypeChecked,
  {
    languageOptions: {
      ecmaVersion: 2023,
      sourceType: "module",
      parserOptions: {
        projectService: true,
        tsconfigRootDir: import.meta.dirname,
      },
    },
  },

  // Plain JavaScript (thread entries, the crash hook, config files) is outside tsconfig.json.
  {
    files: ["**/*.{js,mjs,cjs}"],
    extends: [tseslint.configs.disableTypeChecked],
    languageOptions: { globals: { ...globals.node } },
  },
  {
    files: ["**/*.cjs"],
    languageOptions: { sourceType: "commonjs" },
  },

  // Every TypeScript file: rules that find real mistakes are errors.
  {
    files: ["**/*.{ts,tsx,mts,cts}"],
    rules: {
      // A promise nobody awaits loses its error; a deliberate fire-and-forget says so with `void`.
      // React Router's navigate() returns a promise only for its own transitions, which report
      // their failures through the route's ErrorBoundary.
      "@typescript-eslint/no-floating-promises": [
        "error",
        { ignoreVoid: true, allowForKnownSafeCalls: [{ from: "package", package: "react-router", name: "NavigateFunction" }] },
      ],
      // An async function where a plain callback is expected (forEach, a timer, a prop typed `() => void`)
      // drops its rejection. JSX event attributes are let through: React discards a handler's result, and
      // the handlers here are react-hook-form's handleSubmit(…) around a mutation whose error the form
      // shows; of the 31 flagged in the first run, none left a refusal unsaid on screen.
      "@typescript-eslint/no-misused-promises": ["error", { checksVoidReturn: { attributes: false } }],
      "@typescript-eslint/no-unused-vars": [
        "error",
        {
          args: "after-used",
          argsIgnorePattern: "^_",
          varsIgnorePattern: "^_",
          caughtErrors: "all",
          caughtErrorsIgnorePattern: "^_",
          destructuredArrayIgnorePattern: "^_",
          ignoreRestSiblings: true,
        },
      ],
      "no-fallthrough": "error",
      eqeqeq: ["error", "always", { null: "ignore" }],
      "no-template-curly-in-string": "error",
      "no-unreachable-loop": "error",
      "no-constant-binary-expression": "error",
      "no-useless-catch": "error",
      "array-callback-return": ["error", { checkForEach: false }],
      "@typescript-eslint/return-await": ["error", "in-try-catch"],
      // React Router's loaders throw data(…) and redirect(…) on purpose; a caught `unknown` may be passed on.
      "@typescript-eslint/only-throw-error": [
        "error",
        {
          allow: [
            { from: "package", package: "react-router", name: ["DataWithResponseInit", "UNSAFE_DataWithResponseInit"] },
            { from: "lib", name: "Response" },
          ],
          allowThrowingUnknown: true,
        },
      ],
      "@typescript-eslint/prefer-promise-reject-errors": ["error", { allowThrowingUnknown: true, allowThrowingAny: true }],
      "@typescript-eslint/no-empty-object-type": ["error", { allowInterfaces: "with-single-extends" }],
      // An async function with no await is harmless here (interface implementations, handlers that
      // may await later); it found no bug.
      "@typescript-eslint/require-await": "off",

      // Off: noise for this code base, each checked against the first run (counts from that run).
      // Raw SQL rows are typed Record<string, any> on purpose at the database edge and supertest's
      // bodies are `any`; the any-family flagged every read of them (≈2,100 findings, no bug among them).
      // What leaves the server is checked against the shared zod response schemas instead.
      "@typescript-eslint/no-explicit-any": "off",
      "@typescript-eslint/no-unsafe-assignment": "off",
      "@typescript-eslint/no-unsafe-member-access": "off",
      "@typescript-eslint/no-unsafe-argument": "off",
      "@typescript-eslint/no-unsafe-call": "off",
      "@typescript-eslint/no-unsafe-return": "off",
      // Non-null assertions left after a narrowing (84, none wrong); the compiler checks the types anyway.
      "@typescript-eslint/no-unnecessary-type-assertion": "off",
      // String(x) of an unknown cell or body field is how hostile input is normalised before zod
      // refuses it; `[object Object]` there is the expected, harmless outcome (26 findings, no bug).
      "@typescript-eslint/no-base-to-string": "off",
      "@typescript-eslint/restrict-template-expressions": "off",
      // `if (x) (list.push(a), n++)` is this code base's way of two effects under one condition.
      "@typescript-eslint/no-unused-expressions": "off",
      // `unknown | Promise<unknown>` documents that a hook may be async; it is not a mistake.
      "@typescript-eslint/no-redundant-type-constituents": "off",
    },
  },

  // The client: hooks and accessibility.
  {
    files: ["src/**/*.{ts,tsx}"],
    extends: [jsxA11y.flatConfigs.recommended],
    plugins: { "react-hooks": reactHooks },
    languageOptions: { globals: { ...globals.browser } },
    rules: {
      "react-hooks/rules-of-hooks": "error",
      "react-hooks/exhaustive-deps": "error",
      // The rest of v7's recommended set checks what the React Compiler needs, and this app is not
      // compiled with it (vite.config.ts has no compiler plugin). Those with no finding that point at a
      // real render bug stay as warnings; the others are off:
      // - refs: the "latest value in a ref" idiom (ref.current = prop during render) is used on purpose
      //   for callbacks read after an await (photo-picker, scan-slab-id): 3 findings, no bug;
      // - set-state-in-effect: resetting local state when a prop changes (8 findings, no bug);
      // - immutability: a local counter reassigned inside a useMemo callback (1, a false alarm);
      // - incompatible-library: react-hook-form's watch() and TanStack Table cannot be memoised by
      //   the compiler — only news when compiling (8);
      // - preserve-manual-memoization, use-memo, void-use-memo, config, gating, unsupported-syntax:
      //   compiler bookkeeping.
      "react-hooks/static-components": "warn",
      "react-hooks/globals": "warn",
      "react-hooks/purity": "warn",
      "react-hooks/set-state-in-render": "warn",
      "react-hooks/error-boundaries": "warn",
      // A form label may hold its text two elements down (label > span > span).
      "jsx-a11y/label-has-associated-control": ["error", { depth: 3 }],
      // "Photo 2 of the defect on …" names the record (a stored photo, beside the drawn slab, which is
      // also an image); the word is the plant's, not a description of the element (4 findings).
      "jsx-a11y/img-redundant-alt": "off",
    },
  },

  // Server, scripts, tests and build configs run on Node.
  {
    files: ["server/**", "scripts/**", "tests/**", "shared/**", "*.ts"],
    languageOptions: { globals: { ...globals.node } },
  },
  {
    files: ["tests/**"],
    languageOptions: { globals: { ...globals.browser, ...globals.node } },
  },
);
