import { runStep, defaultRecipe } from '../src';
import { addRicker, makeLine, addNoise } from './synth';
const l0 = makeLine(400, 512, 0.1, 0.025); for (let t=0;t<400;t++) addRicker(l0, t, 5, 1, 400); addNoise(l0, 0.01, 1);
const steps = [...defaultRecipe(400).steps.filter(s=>s.step!=='migration'), { step: 'envelope' as const }];
const ctx = { frequencyMHz: 400, separationM: 0.16 };
for (let rep=0; rep<3; rep++) { let l = l0; const times: string[] = [];
for (const s of steps) { const t0 = performance.now(); for (let k=0;k<5;k++) runStep(l, s, ctx); const r = runStep(l, s, ctx); times.push(`${s.step} ${((performance.now()-t0)/6).toFixed(1)}ms`); l = r.line; }
console.log(times.join(', ')); }
