export * from './frame';
export * from './messages';
