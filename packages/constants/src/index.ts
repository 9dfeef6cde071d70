export { C_M_PER_NS } from './physics';
export { CAUTIONS, CAUTION } from './cautions';
