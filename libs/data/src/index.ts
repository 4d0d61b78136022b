export * from './embedded/embedded-postgres';
export * from './embedded/free-port';
