// Diffusion estimators: pure maths on one-pass sufficient statistics. See README.md.

// Covariance-based estimator (Vestergaard, Blainey & Flyvbjerg 2014)
export { cveFromSums, type CveSums, type CveEstimate } from './cveFromSums.js';
export { cveVariance } from './cveVariance.js';

// MSD line fit and its exact variance (Michalet 2010; Qian, Sheetz & Elson 1991)
export { timeAveragedMsd } from './timeAveragedMsd.js';
export { msdFit, type MsdFitEstimate } from './msdFit.js';
export { msdCovariance } from './msdCovariance.js';
export { msdFitRelativeSe } from './msdFitRelativeSe.js';
export { optimalMsdPoints, type OptimalMsdPoints } from './optimalMsdPoints.js';
export { qianRelativeVariance } from './qianRelativeVariance.js';

// Selection rule
export { chooseEstimator, type EstimatorChoice } from './chooseEstimator.js';

// Anomalous exponent and heterogeneity
export { exposureAveragedPowerLaw } from './exposureAveragedPowerLaw.js';
export { logLogSlope } from './logLogSlope.js';
export { anomalousExponent, type AnomalousExponentInput, type AnomalousExponentEstimate } from './anomalousExponent.js';
export { brentMinimum } from './brentMinimum.js';
export { nonGaussianParameter, type NonGaussianEstimate } from './nonGaussianParameter.js';

// Intervals
export { confidenceInterval } from './confidenceInterval.js';
