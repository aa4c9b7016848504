export * from './auth';
export * from './projects';
export * from './measurements';
export * from './reviews';
export * from './instruments';
export * from './calibrations';
export * from './series';
