// jstat ships without types; the tests use it only as an independent reference.
declare module "jstat" {
  const jStatModule: unknown;
  export default jStatModule;
}
