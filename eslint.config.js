// @ts-check
const tseslint = require('typescript-eslint');

module.exports = tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', '.data/**', 'coverage/**', 'libs/data/src/generated/**', 'bench/results/**'] },
  ...tseslint.configs.recommended,
  {
    files: ['**/*.ts'],
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'inline-type-imports', disallowTypeAnnotations: false }],
      'no-console': ['error', { allow: ['warn', 'error'] }],
      eqeqeq: ['error', 'always'],
    },
  },
  {
    // Nest resolves constructor parameters through emitted type metadata: those
    // imports must stay value imports.
    files: ['apps/**/*.ts'],
    rules: { '@typescript-eslint/consistent-type-imports': 'off' },
  },
  {
    // The computation library is plain functions over plain data: decimal.js and
    // its own files only. No framework, database, environment, clock or I/O.
    files: ['libs/metrology/**/*.ts'],
    ignores: ['libs/metrology/**/*.spec.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          patterns: [{ regex: '^(?!decimal\\.js$|\\.\\.?/).*', message: 'libs/metrology may import only decimal.js and its own files.' }],
        },
      ],
      'no-restricted-globals': [
        'error',
        { name: 'process', message: 'No environment in the computation library: take inputs as arguments.' },
      ],
      'no-restricted-syntax': [
        'error',
        { selector: "NewExpression[callee.name='Date']", message: 'No clock in the computation library: take `asOf` as an argument.' },
        { selector: "MemberExpression[object.name='Date'][property.name='now']", message: 'No clock in the computation library.' },
        { selector: "MemberExpression[object.name='console']", message: 'No logging in the computation library.' },
      ],
    },
  },
  {
    files: ['apps/**/*.ts'],
    ignores: ['apps/api/src/common/http/zod-response.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: [
            {
              name: 'nestjs-zod',
              importNames: ['ZodResponse', 'ZodSerializerDto'],
              message:
                'Import ZodResponse from apps/api/src/common/http/zod-response: it binds the response serializer to the route (there is no global one).',
            },
          ],
        },
      ],
    },
  },
  {
    files: ['libs/**/*.ts'],
    rules: {
      'no-restricted-imports': ['error', { patterns: [{ regex: '(^|/)apps/', message: 'Libraries never import applications.' }] }],
    },
    ignores: ['libs/metrology/**'],
  },
  {
    files: ['scripts/**/*.ts', 'bench/**/*.ts', 'tests/**/*.ts', '**/*.spec.ts'],
    rules: { 'no-console': 'off' },
  },
  {
    files: ['**/*.js'],
    languageOptions: {
      sourceType: 'commonjs',
      globals: { require: 'readonly', module: 'writable', __dirname: 'readonly', process: 'readonly', console: 'readonly' },
    },
    rules: { '@typescript-eslint/no-require-imports': 'off' },
  },
);
