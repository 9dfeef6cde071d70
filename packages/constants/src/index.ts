export { C_M_PER_NS, MAX_UTILITY_DIAMETER_M, nearSurfaceTimeNs } from './physics';
export { CAUTIONS, CAUTION } from './cautions';
