export { type SliceGrid, type Slice, type SliceStack, cellCentre } from './stack';
