#!/usr/bin/env node
'use strict';
// Thin launcher: the CLI is compiled from src/ into dist/ by `npm run build` (run by `prepare` on `npm ci`).
require('../dist/cli/main.js')
  .main(process.argv)
  .then(
    (code) => {
      process.exitCode = code;
    },
    (err) => {
      console.error(`dithercav: internal error: ${err && err.message ? err.message : err}`);
      process.exitCode = 1;
    },
  );
