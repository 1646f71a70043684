export * from './solveNnls';
export * from './estimateMarkerAmplitudes';
export * from './thresholdFromControls';
export * from './backgroundPositions';
export * from './backgroundApertureThreshold';
export * from './backgroundAmplitudeThreshold';
export * from './linkVesicles';
