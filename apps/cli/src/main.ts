#!/usr/bin/env node
import { makeProgram } from './program';

await makeProgram().parseAsync(process.argv);
