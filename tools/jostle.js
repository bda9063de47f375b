#!/usr/bin/env node
// The `jostle` command. Node 20 cannot run TypeScript by itself, so this file registers tsx's
// loader and then runs the command-line entry point, straight from the sources after `npm ci`.
import { register } from 'tsx/esm/api';

register();
const { main } = await import('./cli/main.ts');
process.exitCode = await main(process.argv);
