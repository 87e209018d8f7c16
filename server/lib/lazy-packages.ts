/**
 * Packages that only some requests need, loaded on their first use rather than at start: together
 * they cost ≈ 0.5 s of module loading on the reference machine (exceljs 0.26 s, mailparser 0.12 s,
 * sharp 0.08 s, file-type 0.02 s), which would otherwise delay the moment the server listens
 * (issue 14: sign-in and the yard within 2 s of start). Node caches a module after its first import,
 * so later calls cost a resolved promise.
 */
export const loadExcelJS = async () => (await import("exceljs")).default;
export const loadSharp = async () => (await import("sharp")).default;
export const loadFileType = () => import("file-type");
export const loadMailParser = () => import("mailparser");
