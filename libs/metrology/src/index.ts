export * from './decimal';
export * from './errors';
export * from './statistics';
export * from './statistics-quantiles';
export * from './tolerances';
export * from './balance';
