// ESLint flat config: typescript-eslint's recommended rules, and the room import table of
// DEVELOPERS.md as a boundaries rule, so an import that runs back up a room fails `npm run lint`.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';
import boundaries from 'eslint-plugin-boundaries';

/**
 * The rooms of src/ and what each may import (DEVELOPERS.md, "Rooms and their import
 * rules"). `value` rooms may be imported for anything, `types` rooms with `import type` only.
 * src/version.ts (the package version) may be imported by every room.
 */
const ROOMS = {
  numerics: { value: [], types: [] },
  scenario: { value: [], types: [] },
  physics: { value: ['numerics', 'scenario'], types: ['results'] },
  // results/summary.ts still names the actuator sheet's type: the one import that runs back up.
  results: { value: ['scenario'], types: ['physics'] },
  analysis: { value: ['numerics', 'results', 'physics', 'scenario'], types: [] },
  simulate: { value: ['physics', 'numerics', 'analysis', 'scenario', 'results'], types: [] },
  sweep: { value: ['simulate', 'analysis', 'scenario', 'results', 'numerics'], types: [] },
  report: { value: ['results', 'scenario'], types: [] },
  cli: {
    value: ['numerics', 'scenario', 'physics', 'results', 'analysis', 'simulate', 'sweep', 'report'],
    types: [],
  },
  bench: {
    value: ['numerics', 'scenario', 'physics', 'results', 'analysis', 'simulate', 'sweep', 'report'],
    types: [],
  },
};

const roomPolicies = Object.entries(ROOMS).flatMap(([room, { value, types }]) => {
  const from = { element: { type: room } };
  const policies = [
    { from, allow: { to: { element: { types: { anyOf: [room, ...value] } } } } },
    { from, allow: { to: { file: { categories: 'version' } } } },
  ];
  if (types.length > 0) {
    policies.push({
      from,
      allow: { to: { element: { types: { anyOf: types } } }, dependency: { kind: 'type' } },
    });
  }
  return policies;
});

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'reports/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    files: ['**/*.ts'],
    languageOptions: { parserOptions: { ecmaVersion: 2022, sourceType: 'module' } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      // `import X = require('x')` is how TypeScript types a CommonJS module that has no default export.
      '@typescript-eslint/no-require-imports': ['error', { allowAsImport: true }],
    },
  },
  {
    files: ['bin/*.js'],
    languageOptions: {
      sourceType: 'commonjs',
      globals: { require: 'readonly', process: 'readonly', console: 'readonly' },
    },
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
  {
    files: ['src/**/*.ts'],
    plugins: { boundaries },
    settings: {
      'import/resolver': { node: { extensions: ['.ts', '.js'] } },
      'boundaries/elements': [...Object.keys(ROOMS).map((room) => ({ type: room, pattern: `src/${room}` }))],
      'boundaries/files': [{ category: 'version', pattern: 'src/version.ts' }],
    },
    rules: {
      'boundaries/dependencies': ['error', { default: 'disallow', policies: roomPolicies }],
    },
  },
);
