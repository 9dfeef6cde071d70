// The lint step (`pnpm lint`, part of `pnpm test`): a few rules that catch real bugs, with type
// information from tsconfig.json. Formatting is not linted.
import tseslint from 'typescript-eslint';

export default tseslint.config(
  // packages/*/wasm: AssemblyScript sources (not TypeScript), compiled by scripts/build-*-wasm.mjs
  { ignores: ['**/node_modules/**', '**/dist/**', 'bench/out/**', 'test-artifacts/**', '**/*.js', '**/*.mjs', '**/*.d.mts', '**/*.tmp.ts', 'packages/*/wasm/**'] },
  {
    files: ['**/*.ts'],
    languageOptions: {
      parser: tseslint.parser,
      parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname },
    },
    plugins: { '@typescript-eslint': tseslint.plugin },
    linterOptions: { reportUnusedDisableDirectives: 'error' },
    rules: {
      // a promise nobody awaits loses its error (write `void p` where that is meant)
      '@typescript-eslint/no-floating-promises': 'error',
      // awaiting a value that is not a promise is a mistake in what was meant
      '@typescript-eslint/await-thenable': 'error',
      // an async function where a callback must return void: its rejection goes nowhere
      '@typescript-eslint/no-misused-promises': ['error', { checksVoidReturn: { arguments: false, attributes: false } }],
      '@typescript-eslint/no-unused-vars': ['error', { args: 'after-used', argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none', ignoreRestSiblings: true }],
      // types imported as types vanish from bundles (the viewer imports @lamina/contracts this way)
      '@typescript-eslint/consistent-type-imports': ['error', { prefer: 'type-imports', fixStyle: 'inline-type-imports', disallowTypeAnnotations: false }],
    },
  },
);
