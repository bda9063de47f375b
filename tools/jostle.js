#!/usr/bin/env node
// The `jostle` command. Node 20 cannot run TypeScript by itself, so this file registers tsx's
// loader and then runs the command-line entry point, straight from the sources after `npm ci`.
import { register } from 'tsx/esm/api';

register();
// Output piped into a command that stops reading (`| head`) is not an error of ours: end quietly.
process.stdout.on('error', (error) => {
  if (error.code === 'EPIPE') process.exit(process.exitCode ?? 0);
  throw error;
});
const { main } = await import('./cli/main.ts');
process.exitCode = await main(process.argv);
