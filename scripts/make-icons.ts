/**
 * Renders the installable app's icons into public/ from our own mark (the slab outline cut by the
 * strand's centre line, as in src/components/ui/logo.tsx), in the theme's colours (src/index.css).
 * Run once after changing the mark: `npx tsx scripts/make-icons.ts`; the PNGs are committed.
 */
import fs from "node:fs";
import path from "node:path";
import sharp from "sharp";

const INK_950 = "#0c141b";
const BRASS_400 = "#e8b04a";
const STRAND_LINE = "#5fb3c2";

/** The mark on a 512-unit canvas; `inset` shrinks it towards the centre (maskable icons are cropped to a circle). */
function markSvg({ rounded, inset }: { rounded: boolean; inset: number }) {
  const s = 512;
  const k = 1 - inset * 2;
  const c = (v: number) => (s * inset + v * k).toFixed(1);
  const w = (v: number) => (v * k).toFixed(1);
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${s}" height="${s}" viewBox="0 0 ${s} ${s}">
  <rect width="${s}" height="${s}" rx="${rounded ? 96 : 0}" fill="${INK_950}"/>
  <rect x="${c(96)}" y="${c(176)}" width="${w(320)}" height="${w(160)}" rx="${w(24)}" fill="none" stroke="${BRASS_400}" stroke-width="${w(36)}"/>
  <path d="M${c(56)} ${c(256)}H${c(456)}" stroke="${STRAND_LINE}" stroke-width="${w(32)}" stroke-dasharray="${w(48)} ${w(32)}"/>
</svg>`;
}

const out = path.resolve(import.meta.dirname, "../public");
fs.mkdirSync(out, { recursive: true });

const icons: { file: string; size: number; svg: string }[] = [
  { file: "icon-192.png", size: 192, svg: markSvg({ rounded: true, inset: 0 }) },
  { file: "icon-512.png", size: 512, svg: markSvg({ rounded: true, inset: 0 }) },
  // Maskable: full-bleed background, the mark inside the central 80 % circle that every mask keeps.
  { file: "icon-maskable-512.png", size: 512, svg: markSvg({ rounded: false, inset: 0.14 }) },
];

for (const i of icons) {
  await sharp(Buffer.from(i.svg)).resize(i.size, i.size).png({ compressionLevel: 9 }).toFile(path.join(out, i.file));
  console.log(`${i.file} ${i.size}×${i.size}`);
}
fs.writeFileSync(path.join(out, "icon.svg"), markSvg({ rounded: true, inset: 0 }));
