export * from './auth';
export * from './projects';
export * from './errors';
export * from './models';
export * from './engine';
export * from './sheets';
export * from './team';
