export * from './enums';
export * from './auth';
export * from './clubs';
export * from './land';
export * from './species';
export * from './permits';
export * from './field';
export * from './system';
