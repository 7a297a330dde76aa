/** The analysis room: streaming statistics, detection-band ripple, hops, spectra, classes, the design rule, decimation, CSV. */
export * from './stats';
export * from './boxcar';
export * from './hops';
export * from './spectra';
export * from './opticalSpectrum';
export * from './harmonics';
export * from './classify';
export * from './decoupling';
export * from './decimate';
export * from './csv';
export * from './summarise-run';
export * from './stratified';
