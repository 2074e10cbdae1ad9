// Lint set of the house style (docs: ../DEVELOPERS.md): type-aware typescript-eslint, plus the
// import boundary that keeps src/core pure.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'coverage/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommendedTypeChecked,
  {
    languageOptions: {
      parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname },
    },
    rules: {
      '@typescript-eslint/switch-exhaustiveness-check': 'error',
      '@typescript-eslint/no-floating-promises': 'error',
      '@typescript-eslint/consistent-type-imports': 'error',
      '@typescript-eslint/only-throw-error': 'error',
      eqeqeq: ['error', 'always'],
      // `_name` marks a value dropped on purpose, e.g. a key removed by rest destructuring.
      '@typescript-eslint/no-unused-vars': [
        'error',
        { argsIgnorePattern: '^_', varsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_' },
      ],
      'no-restricted-syntax': [
        'error',
        { selector: "CallExpression[callee.object.name=/^(it|test|describe)$/][callee.property.name=/^(only|skip)$/]", message: 'no focused or skipped tests' },
      ],
    },
  },
  {
    files: ['src/core/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [
            { group: ['node:*', 'fs', 'http', 'https', 'express', 'pino', 'pino-http'], message: 'src/core is pure: no I/O or framework' },
            { group: ['../../fhir/*', '../../cds/*', '../../http/*', '../../cli/*', '../fhir/*', '../cds/*', '../http/*', '../cli/*', '../policy/*', '../../policy/*'], message: 'src/core imports only src/core' },
          ],
        },
      ],
    },
  },
  {
    files: ['tests/**/*.ts', 'bench/**/*.ts'],
    rules: {
      // Tests read untyped JSON responses and fixtures on purpose.
      '@typescript-eslint/no-unsafe-assignment': 'off',
      '@typescript-eslint/no-unsafe-member-access': 'off',
      '@typescript-eslint/no-unsafe-call': 'off',
      '@typescript-eslint/no-unsafe-argument': 'off',
      '@typescript-eslint/no-unsafe-return': 'off',
      '@typescript-eslint/no-explicit-any': 'off',
    },
  },
  { files: ['eslint.config.js', 'src/store/store-worker-tsx.mjs'], ...tseslint.configs.disableTypeChecked },
);
