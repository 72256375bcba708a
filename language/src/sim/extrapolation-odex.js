// Re-exports the `odex` package for extrapolation.ts. The package ships its TypeScript source,
// which does not pass this project's strict type check; importing it through this plain module
// keeps that source out of the type check, and extrapolation-odex.d.ts declares the part we use.
export { Solver, Outcome } from 'odex';
