export { selectInPlace, selectNear, type NumericArray } from './select';
export { median, medianInPlace, medianLow, medianHigh, medianAbsDeviation, weightedMedian } from './median';
export { quantile, quantileSorted, quantileInPlace } from './quantile';
export { runningMedian } from './running-median';
