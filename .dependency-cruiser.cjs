/**
 * The layer map of DEVELOPERS.md ("Layers"), checked: `npm run deps:check` (the first step of `npm test`).
 * client features → shared contract ← server routes → services → pure stats and metallurgy.
 * Type-only imports count as well: a layer should not even name the types of a layer above it.
 */
/** @type {import('dependency-cruiser').IConfiguration} */
module.exports = {
  forbidden: [
    {
      name: "no-cycles",
      severity: "error",
      comment: "An import cycle ties modules together so neither can be understood, tested or loaded alone. Move what both need into a module of its own.",
      from: { path: "^(server|shared|src)/" },
      to: { circular: true },
    },
    {
      name: "services-import-no-routes",
      severity: "error",
      comment: "Services hold the logic; routes are the HTTP layer on top of them. A service never imports a route.",
      from: { path: "^server/services/" },
      to: { path: "^server/routes/" },
    },
    {
      name: "stats-are-pure",
      severity: "error",
      comment: "server/stats holds pure numerics tested against published values: no database, services or HTTP.",
      from: { path: "^server/stats/" },
      to: { path: "^server/(db|services|routes|middleware|import|mail|seed)/|^server/(app|auth|env|index)\\.ts$" },
    },
    {
      name: "metallurgy-is-pure",
      severity: "error",
      comment: "server/metallurgy holds pure formulas: no database, services or HTTP.",
      from: { path: "^server/metallurgy/" },
      to: { path: "^server/(db|services|routes|middleware|import|mail|seed)/|^server/(app|auth|env|index)\\.ts$" },
    },
    {
      name: "shared-stands-alone",
      severity: "error",
      comment: "shared/ is the contract both sides read: it imports neither the server nor the client.",
      from: { path: "^shared/" },
      to: { path: "^(server|src)/" },
    },
    {
      name: "client-imports-no-server",
      severity: "error",
      comment: "The client reaches the server over HTTP only; what both need lives in shared/.",
      from: { path: "^src/" },
      to: { path: "^server/" },
    },
    {
      name: "no-unresolvable",
      severity: "error",
      comment: "An import that resolves to nothing (a typo, a file moved away).",
      from: { path: "^(server|shared|src)/" },
      // virtual:… modules are made by Vite plugins at build time (virtual:pwa-register).
      to: { couldNotResolve: true, pathNot: "^virtual:" },
    },
  ],
  options: {
    doNotFollow: { path: "node_modules" },
    exclude: { path: "^(node_modules|dist|build)/" },
    tsPreCompilationDeps: true,
    tsConfig: { fileName: "tsconfig.json" },
    enhancedResolveOptions: {
      exportsFields: ["exports"],
      conditionNames: ["import", "require", "node", "default", "types"],
      extensions: [".ts", ".tsx", ".mts", ".js", ".mjs", ".cjs", ".json", ".d.ts"],
    },
    skipAnalysisNotInRules: true,
  },
};
