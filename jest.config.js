/** @type {import('jest').Config} */
const swc = [
  '@swc/jest',
  {
    jsc: {
      target: 'es2022',
      parser: { syntax: 'typescript', decorators: true },
      transform: { legacyDecorator: true, decoratorMetadata: true },
    },
    module: { type: 'commonjs' },
  },
];

module.exports = {
  rootDir: __dirname,
  testEnvironment: 'node',
  transform: { '^.+\\.ts$': swc },
  moduleFileExtensions: ['ts', 'js', 'json'],
  moduleNameMapper: {
    '^@registry/metrology$': '<rootDir>/libs/metrology/src/index.ts',
    '^@registry/data$': '<rootDir>/libs/data/src/index.ts',
  },
  testMatch: ['<rootDir>/libs/**/*.spec.ts', '<rootDir>/apps/**/*.spec.ts', '<rootDir>/tests/**/*.spec.ts'],
  globalSetup: '<rootDir>/tests/setup/global-setup.ts',
  globalTeardown: '<rootDir>/tests/setup/global-teardown.ts',
  testTimeout: 30000,
  testPathIgnorePatterns: ['/node_modules/', '/dist/', '/.data/'],
};
