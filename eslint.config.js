import tseslint from 'typescript-eslint';
import layering from './tools/eslint/layering.js';

/** Globals that exist only in a browser or only in Node; core/ may use neither. */
const DOM_GLOBALS = ['window', 'document', 'navigator', 'localStorage', 'sessionStorage', 'location', 'HTMLElement', 'fetch', 'WebSocket'];
const NODE_GLOBALS = ['process', 'Buffer', 'require', '__dirname', '__filename', 'global', 'setImmediate'];

export default tseslint.config(
  { ignores: ['node_modules/**', 'dist/**', 'out/**', 'test-artifacts/**', 'renderer/dist/**'] },
  {
    files: ['**/*.ts', '**/*.tsx', '**/*.js'],
    languageOptions: { parser: tseslint.parser, ecmaVersion: 2022, sourceType: 'module' },
    plugins: { twinstep: layering, '@typescript-eslint': tseslint.plugin },
    rules: {
      'twinstep/layering': 'error',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
    },
  },
  {
    files: ['core/**/*.ts'],
    rules: {
      'no-restricted-globals': ['error', ...[...DOM_GLOBALS, ...NODE_GLOBALS].map((name) => ({ name, message: 'core/ is pure TypeScript: no DOM and no Node globals.' }))],
    },
  },
  {
    files: ['renderer/**/*.ts', 'renderer/**/*.tsx'],
    rules: {
      'no-restricted-globals': ['error', ...NODE_GLOBALS.map((name) => ({ name, message: 'renderer/ runs in a browser: no Node globals.' }))],
    },
  },
);
