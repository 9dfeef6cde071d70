export { C_M_PER_NS, type Origin, type HyperbolaFit, type VelocityLayer, type VelocityModel, type VelocityReport } from './model';
