/** Static optics: Airy response, Gaussian beams and resonator modes, beam overlap, the system's beams. */
export * from './airy';
export * from './gaussian';
export * from './overlap';
export * from './beams';
