export * from './decimal';
export * from './errors';
