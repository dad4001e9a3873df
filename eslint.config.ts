import pluginVue from 'eslint-plugin-vue';
import { defineConfigWithVueTs, vueTsConfigs } from '@vue/eslint-config-typescript';
import skipFormatting from '@vue/eslint-config-prettier/skip-formatting';
import globals from 'globals';

const INCH_MESSAGE =
  'Convert lengths with convertLength or MM_PER_IN from @shared/engine (shared/engine/length.ts), not the literal 25.4.';

export default defineConfigWithVueTs(
  {
    ignores: [
      'dist/**',
      'node_modules/**',
      '.data/**',
      'drizzle/**',
      'test-results/**',
      'uploads/**',
    ],
  },
  pluginVue.configs['flat/recommended'],
  vueTsConfigs.recommended,
  {
    languageOptions: { globals: { ...globals.node, ...globals.browser } },
    rules: {
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_' },
      ],
    },
  },
  {
    // The engine and the API contract are shared by browser and server: they import neither side.
    files: ['shared/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        { patterns: ['@/*', '**/src/*', '**/server/*', 'node:*', 'express', 'pg', 'drizzle-orm*'] },
      ],
    },
  },
  {
    // Millimetres per inch (25.4 exactly) are written once, in shared/engine/length.ts
    // (MM_PER_IN, convertLength); a second copy of the number is a second place that converts
    // and rounds a length, and the same length would read two ways.
    files: ['**/*.ts', '**/*.vue'],
    ignores: ['shared/engine/length.ts', 'tests/**'],
    rules: {
      'no-restricted-syntax': ['error', { selector: 'Literal[value=25.4]', message: INCH_MESSAGE }],
      'vue/no-restricted-syntax': [
        'error',
        { selector: 'Literal[value=25.4]', message: INCH_MESSAGE },
      ],
    },
  },
  {
    // Client layers, one way down: views and components → composables → stores → src/lib. A
    // store importing a composable would close a loop (composables use the stores), and src/lib
    // is plain TypeScript, without Vue's reactivity.
    files: ['src/stores/**/*.ts'],
    rules: { 'no-restricted-imports': ['error', { patterns: ['@/composables/*'] }] },
  },
  {
    files: ['src/lib/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        { paths: ['vue', 'pinia'], patterns: ['@/composables/*', '@/stores/*', '@/views/*'] },
      ],
    },
  },
  skipFormatting,
);
