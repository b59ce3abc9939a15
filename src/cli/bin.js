#!/usr/bin/env node
// Entry for the package's `bin`: runs the TypeScript CLI through tsx.
import { register } from 'tsx/esm/api';
register();
await import('./cairnfield.ts');
