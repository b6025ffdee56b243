#!/usr/bin/env node
// Launcher for `npx bandproof <command> …` inside the project: runs scripts/cli.ts through tsx's loader API,
// so no build step is needed. All behaviour (exit codes, one-line errors) lives in scripts/cli.ts.
import process from 'node:process'
import { tsImport } from 'tsx/esm/api'

const { main } = await tsImport('../scripts/cli.ts', import.meta.url)
process.exitCode = await main(process.argv.slice(2))
