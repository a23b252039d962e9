// Lint rules only (no formatting rules: the code's layout is left as it is).
import js from '@eslint/js'
import tseslint from 'typescript-eslint'

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'test/client/almanac-api.ts', 'coverage/**',
    // Installed only to re-run the chart-library comparison (npm install --no-save echarts).
    'bench/workbench-charts/echarts.ts'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: {
      parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname },
    },
    rules: {
      // A promise nobody awaits or catches fails silently.
      '@typescript-eslint/no-floating-promises': 'error',
      '@typescript-eslint/no-misused-promises': 'error',
      // `_name` marks a value left out on purpose (a destructured field dropped, an unused parameter).
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_' }],
    },
  },
  {
    // Published coefficients keep the digits they were published with; the nearest double is meant.
    files: ['src/engine/**/*.ts'],
    rules: { 'no-loss-of-precision': 'off' },
  },
  {
    // SKU and cell checks match control characters on purpose (they refuse them).
    files: ['src/history/cells.ts', 'src/schemas/run.ts', 'test/schemas/series-check.test.ts'],
    rules: { 'no-control-regex': 'off' },
  },
  {
    // Browser code of the chart comparison: checked with the pages' compiler settings.
    files: ['bench/workbench-charts/*.ts'],
    languageOptions: { parserOptions: { projectService: false, project: ['web/tsconfig.json'] } },
  },
  {
    files: ['**/*.mjs', '**/*.js'],
    ...tseslint.configs.disableTypeChecked,
  },
)
