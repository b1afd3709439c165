export * from './matrix.js';
export * from './cholesky.js';
export * from './qr.js';
