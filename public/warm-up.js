/*
 * Strandsight, before the app's code has arrived. A page's first number format costs the browser
 * 30–80 ms (it loads its number data then, once for every locale); made here, as soon as
 * this small file arrives, while the app's code is still downloading, instead of inside the first
 * screen's drawing. A plain file (public/, served as it is): it must run before the app's modules.
 */
try {
  new Intl.NumberFormat("en-GB", { maximumFractionDigits: 1 }).format(1.5);
} catch (_) {
  // A browser without Intl: the app's own formatting says so, not this.
}
