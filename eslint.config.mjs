// Lint rules of the project (run in `npm test` through `npm run lint`). Formatting is
// Prettier's (.prettierrc.json); these rules are about meaning, plus the length of a
// function in src/ (one screen: a longer one is split along the physics, DEVELOPERS.md).
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

export default tseslint.config(
  { ignores: ['node_modules/', 'dist/', '.build/', '.astro/', '.cache/', 'bench-output/', 'build-output/', 'tests/artifacts/'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    languageOptions: {
      globals: {
        process: 'readonly',
        console: 'readonly',
        Buffer: 'readonly',
        URL: 'readonly',
        setTimeout: 'readonly',
        clearTimeout: 'readonly',
        setImmediate: 'readonly',
        structuredClone: 'readonly',
        performance: 'readonly',
        TextEncoder: 'readonly',
        TextDecoder: 'readonly',
        document: 'readonly',
        window: 'readonly',
        HTMLElement: 'readonly',
        Element: 'readonly',
        SVGElement: 'readonly',
        Event: 'readonly',
        KeyboardEvent: 'readonly',
        MouseEvent: 'readonly',
        globalThis: 'readonly',
      },
    },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
      // the sanitisers and their tests look for control characters on purpose
      'no-control-regex': 'off',
    },
  },
  {
    files: ['src/**/*.ts'],
    rules: {
      // About one screen: a longer function is split along the physics (DEVELOPERS.md).
      'max-lines-per-function': ['error', { max: 80, skipBlankLines: true, skipComments: true, IIFEs: true }],
    },
  },
);
