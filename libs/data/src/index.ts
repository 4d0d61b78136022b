export * from './embedded/embedded-postgres';
export * from './embedded/free-port';
export * from './migrations/migration-files';
export * from './migrations/migration-runner';
export * from './prisma/prisma-client';
export * from './database-server';
export * from './runtime-role';
