import { encodeCog } from '../cog/src';
import { idwGrid, sliceStats } from './src';
const w = 320, h = 313, nb = 40;
const bands = Array.from({ length: nb }, (_, b) => Float32Array.from({ length: w * h }, (_, i) => Math.sin(i * 0.01 + b)));
let t = performance.now();
for (const b of bands) sliceStats(b, -9999);
console.log('stats', performance.now() - t);
t = performance.now();
await encodeCog(bands, w, h, { originX: 0, originY: 0, pixelSize: 1, crs: { epsg: 32617 }, nodata: -9999 });
console.log('encode', performance.now() - t);
t = performance.now();
await encodeCog(bands, w, h, { originX: 0, originY: 0, pixelSize: 1, crs: { epsg: 32617 }, nodata: -9999, predictor: 1 });
console.log('encode p1', performance.now() - t);
// idw
const n = 100000; const coords = new Float64Array(2 * n); const vals = new Float32Array(n * nb);
for (let i = 0; i < n; i++) { coords[2 * i] = (i % 1250) / 32; coords[2 * i + 1] = Math.floor(i / 1250) * 0.5; }
for (let i = 0; i < vals.length; i++) vals[i] = Math.random();
const grid = { crs: 'x', originX: 0, originY: 40, cellSize: 0.125, width: w, height: h, nodata: -9999 };
t = performance.now();
idwGrid(coords, vals, nb, grid, { radius: 0.5, maxPoints: 12 });
console.log('idw 40', performance.now() - t);
t = performance.now();
idwGrid(coords, vals.subarray(0, n), 1, grid, { radius: 0.5, maxPoints: 12 });
console.log('idw 1', performance.now() - t);
