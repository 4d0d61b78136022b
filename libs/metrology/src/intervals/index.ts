export * from './staircase';
