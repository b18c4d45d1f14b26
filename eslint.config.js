import tseslint from 'typescript-eslint';
import vue from 'eslint-plugin-vue';

export default tseslint.config(
  { ignores: ['**/node_modules/**', '**/dist/**', 'data/**', 'tests/artifacts/**'] },
  ...tseslint.configs.recommended,
  ...vue.configs['flat/recommended'],
  {
    files: ['**/*.vue'],
    languageOptions: { parserOptions: { parser: tseslint.parser } },
  },
  {
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      'vue/multi-word-component-names': 'off',
      'vue/max-attributes-per-line': 'off',
      'vue/singleline-html-element-content-newline': 'off',
      'vue/html-self-closing': 'off',
    },
  },
  {
    // The orbit engine is pure: no Node or browser globals.
    files: ['shared/src/**/*.ts'],
    rules: {
      'no-restricted-globals': ['error', 'process', 'window', 'document', 'Buffer', 'require', 'fetch', 'localStorage'],
    },
  },
  // Who may import whom (DEVELOPERS.md): shared imports no other workspace; server, widget and
  // console never import each other; the widget takes the engine module by module and the
  // contract as types; the console takes shared as types only. No relative path into another
  // workspace's source.
  {
    files: ['shared/src/**/*.ts'],
    ignores: ['shared/src/**/*.spec.ts', 'shared/src/**/testing/**'],
    rules: {
      '@typescript-eslint/no-restricted-imports': ['error', { patterns: [{ group: ['@nadirline/*', '**/server/src/**', '**/widget/src/**', '**/console/src/**', 'express', 'sequelize', 'vue', 'node:*'], message: 'shared/ is pure: it imports no other workspace, framework or Node module.' }] }],
    },
  },
  {
    files: ['server/src/**/*.ts'],
    rules: {
      '@typescript-eslint/no-restricted-imports': ['error', { patterns: [
        { group: ['@nadirline/widget', '@nadirline/widget/*', '@nadirline/console', '@nadirline/console/*', '**/widget/src/**', '**/console/src/**', '**/shared/src/**'], message: 'The server imports only @nadirline/shared (by package name); it talks to the widget and console over HTTP.' },
      ] }],
    },
  },
  {
    files: ['widget/src/**/*.ts', 'widget/src/**/*.vue'],
    rules: {
      '@typescript-eslint/no-restricted-imports': ['error', {
        paths: [
          { name: '@nadirline/shared', message: 'Import the engine module by module (@nadirline/shared/orbit/<module>.ts) so the widget bundle takes only what it draws.' },
          { name: '@nadirline/shared/contract', allowTypeImports: true, message: 'The widget takes the contract as types only (import type): its schemas would grow the bundle.' },
        ],
        patterns: [
          { group: ['@nadirline/server', '@nadirline/server/*', '@nadirline/console', '@nadirline/console/*', '**/server/src/**', '**/console/src/**', '**/shared/src/**'], message: 'The widget talks to the server over /v1 only, and imports shared by package name.' },
        ],
      }],
    },
  },
  {
    files: ['console/src/**/*.ts', 'console/src/**/*.vue'],
    rules: {
      '@typescript-eslint/no-restricted-imports': ['error', {
        paths: [
          { name: '@nadirline/shared', allowTypeImports: true, message: 'The console takes shared as types only (import type).' },
          { name: '@nadirline/shared/contract', allowTypeImports: true, message: 'The console takes the contract as types only (import type).' },
        ],
        patterns: [
          { group: ['@nadirline/shared/*', '!@nadirline/shared/contract'], allowTypeImports: true, message: 'The console takes shared as types only (import type).' },
          { group: ['@nadirline/server', '@nadirline/server/*', '@nadirline/widget', '@nadirline/widget/*', '**/server/src/**', '**/widget/src/**', '**/shared/src/**'], message: 'The console talks to the server over /api only, and imports shared by package name.' },
        ],
      }],
    },
  },
);
