/** Public API of the estimation engine (pure TypeScript: arrays in, numbers out). */
export * from './types';
export { createRandom, type Random } from './random';
export { plantedPanel, plantedCovariance, type PlantedPanel, type PlantedPanelOptions } from './planted';
export { observationWeights, effectiveSampleSize, decayFactor, describeWeighting, type WeightingSummary } from './weights';
export { buildScatter, scatterFromCovariance, weightedMean, panelHasMissing, type Scatter } from './scatter';
export { sampleCovariance, type SampleCovarianceResult, type SampleCovarianceOptions } from './sampleCovariance';
export { nearestPsdCovariance, type NearestPsdResult } from './nearestPsd';
export { ledoitWolf, type LedoitWolfResult } from './ledoitWolf';
export { fitPpca, topSpectrum, type PpcaResult, type Spectrum } from './ppca';
export { fitFactorAnalysis, type FactorAnalysisOptions, type FactorAnalysisResult } from './factorAnalysis';
export { fitWithMissing, type MissingFitOptions, type MissingFitResult } from './missing';
export { fitProfileFactorAnalysis, type ProfileFitResult } from './faProfile';
export {
  LOG_2PI,
  factorModelLogLikelihood,
  denseLogLikelihood,
  modelLogLikelihood,
  factorLogLikelihoodFromScatter,
  woodburyPieces,
} from './logLikelihood';
export { canonicalLoadings, orientFactorModel } from './orientation';
export { chooseFactorCount, freeParameters, marchenkoPasturEdge, type FactorCountResult, type FactorCountRow, type FactorCountOptions } from './factorCount';
export { fitModel, completeRows, type FitOptions, type FitResult, type FitDiagnostics, type FitMethod, type MissingPolicy } from './fit';
export { symmetricEigen, topEigenpairs, denseOperator, type SymmetricOperator, type EigenResult } from './linalg/eigen';
export { cholesky, choleskySolve, choleskyLogDet, spdInverse, tryCholesky } from './linalg/cholesky';
export { multiplyABt, multiply, multiplyAtB, rowGram, transpose, lowRankPlusDiagonal, relativeFrobenius } from './linalg/dense';
export { parallelMultiplyABt, sharedFloat64 } from './linalg/parallel';
export { squarem, type EmStep, type SquaremOptions, type SquaremResult } from './squarem';
// Risk, rotation, scores, sampling and forecast evaluation on fitted models.
export {
  portfolioRisk,
  portfolioRiskBatch,
  varianceBreakdown,
  parametricTailRisk,
  monteCarloRisk,
  confidenceQuantile,
  PERIODS_PER_YEAR,
  DEFAULT_CONFIDENCE_LEVELS,
  EXPOSURE_CAVEAT,
  RISK_ASSUMPTIONS,
  type RiskOptions,
  type PortfolioRisk,
  type VarianceBreakdown,
  type TailRisk,
  type ExposureSummary,
  type MonteCarloOptions,
  type MonteCarloRisk,
  type MonteCarloTailRisk,
} from './risk';
export {
  communalities,
  specificShares,
  impliedCorrelation,
  impliedCorrelations,
  impliedCorrelationMatrix,
  FULL_CORRELATION_LIMIT,
  principalAngles,
  loadingSubspaceAngles,
  varimax,
  varimaxCriterion,
  checkRotationInvariance,
  type VarimaxOptions,
  type VarimaxResult,
  type RotationCheck,
} from './rotation';
export { sampleReturns, semidefiniteCholesky, type SamplingOptions } from './sampling';
export { factorScores, type FactorScores } from './scores';
export {
  biasStatistic,
  rollingBiasStatistic,
  qlikeLoss,
  kupiecTest,
  minimumVarianceWeights,
  rollingWindows,
  evaluateForecasts,
  type BiasStatistic,
  type QlikeLoss,
  type KupiecTest,
  type Window,
  type ForecastEvaluationInput,
  type ForecastEvaluation,
} from './evaluation';
export { covarianceTimes, loadingsTransposeTimes, denseCovariance, capacitanceMatrix, factorPrecision, assertWeights } from './lowRank';
export { normalCdf, normalQuantile, normalDensity, erf, erfc, chiSquare1Survival, NORMAL_QUANTILE_95, NORMAL_QUANTILE_99 } from './normalDistribution';
export { thinSvd, singularValues, orthonormalBasis, type ThinSvd } from './jacobiSvd';
