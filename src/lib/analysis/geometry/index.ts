export { applyAffine } from './applyAffine';
export { composeAffine } from './composeAffine';
export { decomposeAffine, type DecomposeAffineResult } from './decomposeAffine';
export { describeAffine } from './describeAffine';
export {
  evaluateRegistration,
  type EvaluateRegistrationOptions,
  type EvaluateRegistrationResult,
  type RegistrationWarning,
} from './evaluateRegistration';
export { findPairsRansac, type FindPairsRansacOptions, type FindPairsRansacResult, type ProposedPair } from './findPairsRansac';
export { fitAffine, type FitAffineOptions, type FitAffineResult } from './fitAffine';
export { fitModel, type FitModelOptions, type FitModelResult } from './fitModel';
export { fitSimilarity, type FitSimilarityOptions, type FitSimilarityResult } from './fitSimilarity';
export { invertAffine } from './invertAffine';
export { leaveOneOutTre, type LeaveOneOutTreOptions, type LeaveOneOutTreResult } from './leaveOneOutTre';
export { mulberry32 } from './mulberry32';
export { normalisePoints, type NormalisePointsResult } from './normalisePoints';
export { predictTre, type PredictTreOptions, type PredictTreResult } from './predictTre';
export { proposePartner, type ProposePartnerOptions, type ProposePartnerResult } from './proposePartner';
export { residuals, type ResidualsResult } from './residuals';
export { similarityToAffine } from './similarityToAffine';
export { snapToNearest, type SnapToNearestResult } from './snapToNearest';
export type { FiducialPair, RegistrationModel, Similarity } from './types';
export { fitBeadSpots, type BeadSpotFit, type FitBeadSpotsOptions } from './fitBeadSpots';
export {
  estimateChannelRegistration, type ChannelRegistration, type EstimateChannelRegistrationOptions, type EstimateChannelRegistrationResult,
  type RegistrationBead, type RegistrationChannel,
} from './estimateChannelRegistration';
