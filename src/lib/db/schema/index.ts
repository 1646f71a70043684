export * from './users';
export * from './studies';
export * from './fields';
export * from './results';
export * from './audit';
