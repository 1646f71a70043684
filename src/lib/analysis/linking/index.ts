export * from './solveNnls';
export * from './estimateMarkerAmplitudes';
export * from './thresholdFromControls';
export * from './backgroundApertureThreshold';
export * from './linkVesicles';
