import { OpenAPIRegistry, OpenApiGeneratorV3 } from "@asteasolutions/zod-to-openapi";

/**
 * Routes describe themselves here as they are declared (server/lib/route.ts), so the document at
 * /api/openapi.json always lists exactly the routes the app serves.
 */
export function createOpenApiRegistry() {
  const registry = new OpenAPIRegistry();
  registry.registerComponent("securitySchemes", "session", {
    type: "apiKey",
    in: "cookie",
    name: "better-auth.session_token",
    description: "Session cookie set by POST /api/auth/sign-in/email.",
  });
  registry.registerComponent("securitySchemes", "apiToken", {
    type: "http",
    scheme: "bearer",
    description: "API token created by an administrator; reaches the ingest routes only.",
  });
  return registry;
}

export function buildOpenApiDocument(registry: OpenAPIRegistry, serverUrl: string) {
  return new OpenApiGeneratorV3(registry.definitions).generateDocument({
    openapi: "3.0.3",
    info: {
      title: "Strandsight API",
      version: "0.1.0",
      description:
        "Slab defects joined to heat records and casting conditions. Every error is " +
        "`{ error: { code, message, details? } }`. Sign in through /api/auth/sign-in/email (better-auth) to get the session cookie.",
    },
    servers: [{ url: serverUrl }],
  });
}
