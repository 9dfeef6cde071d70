export { mulberry32, gaussian } from './mulberry32';
