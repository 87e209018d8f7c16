/**
 * Invented demo photos for the newest unreviewed defects, so the quality engineer's review queue
 * shows thumbnails in the demo. Each is drawn here (a grey slab surface with a mark shaped by the
 * defect type) and marked plainly as an invented demo picture; it goes through the real pipeline.
 */
import sharp from "sharp";
import type { Db } from "../db/client";
import { checkPhoto, storePhotoFiles } from "../services/photos.service";

const W = 1200;
const H = 900;

function markFor(code: string, i: number): string {
  const x = 300 + ((i * 97) % 600);
  const y = 250 + ((i * 61) % 400);
  switch (code) {
    case "LFC":
    case "LCC":
      return `<path d="M${x} ${y - 220} q 12 110 -6 220 t 10 220" stroke="#1b1b1b" stroke-width="5" fill="none"/>`;
    case "TCC":
    case "TRC":
      return `<path d="M${x - 260} ${y} q 130 -14 260 4 t 240 -6" stroke="#1b1b1b" stroke-width="5" fill="none"/>`;
    case "SLG":
    case "SCB":
      return `<ellipse cx="${x}" cy="${y}" rx="70" ry="42" fill="#4a3b2a" opacity="0.85"/><ellipse cx="${x + 30}" cy="${y + 12}" rx="26" ry="16" fill="#2c241b"/>`;
    case "PIN":
    case "BLH":
      return Array.from(
        { length: 9 },
        (_, k) => `<circle cx="${x + (k % 3) * 40}" cy="${y + Math.floor(k / 3) * 36}" r="${6 + (k % 4)}" fill="#161616"/>`,
      ).join("");
    default:
      return `<rect x="${x - 60}" y="${y - 30}" width="120" height="60" rx="18" fill="#3a3a3a" opacity="0.8"/>`;
  }
}

async function render(code: string, i: number): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}">
    <defs><linearGradient id="g" x1="0" x2="1"><stop offset="0" stop-color="#8d9196"/><stop offset="1" stop-color="#6f7479"/></linearGradient></defs>
    <rect width="${W}" height="${H}" fill="url(#g)"/>
    ${Array.from({ length: 14 }, (_, k) => `<line x1="0" y1="${40 + k * 62}" x2="${W}" y2="${46 + k * 62}" stroke="#7d8186" stroke-width="3" opacity="0.5"/>`).join("")}
    ${markFor(code, i)}
    <rect x="0" y="${H - 70}" width="${W}" height="70" fill="#14202b" opacity="0.85"/>
    <text x="24" y="${H - 26}" font-family="sans-serif" font-size="30" fill="#f1efea">Invented demo photo · ${code} · not a real slab</text>
  </svg>`;
  return sharp(Buffer.from(svg)).jpeg({ quality: 80 }).toBuffer();
}

export async function addDemoPhotos(db: Db, uploadDir: string, limit = 40, lastShiftsLimit = 4): Promise<number> {
  const c = db.$client;
  // The history's newest unreviewed entries (as before the last shifts were added), then a few of
  // the last shifts' entries, so the inspector's own recent entries show photos too.
  const select = (keys: string) =>
    c.prepare(
      `select d.id, t.code, d.created_by, d.found_at from defects d join defect_types t on t.id = d.type_id
       where d.review_status = 'new' and d.deleted_at is null and ${keys}
         and not exists (select 1 from defect_photos p where p.defect_id = d.id)
       order by d.found_at desc limit ?`,
    );
  const defects = [
    ...(select("(d.client_key is null or d.client_key not like 'demo-yard-%')").all(limit) as {
      id: number;
      code: string;
      created_by: string;
      found_at: number;
    }[]),
    ...(select("d.client_key like 'demo-yard-%'").all(lastShiftsLimit) as { id: number; code: string; created_by: string; found_at: number }[]),
  ];
  const ins = c.prepare(
    `insert into defect_photos (id, defect_id, display_file, display_mime, thumb_file, width, height, bytes, sha256, original_name, created_by, created_at)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  let n = 0;
  for (const [i, d] of defects.entries()) {
    const stored = await storePhotoFiles(uploadDir, await checkPhoto(await render(d.code, i), `demo-${d.id}.jpg`));
    ins.run(
      stored.id,
      d.id,
      stored.displayFile,
      stored.displayMime,
      stored.thumbFile,
      stored.width,
      stored.height,
      stored.bytes,
      stored.sha256,
      `demo-${d.id}.jpg`,
      d.created_by,
      d.found_at,
    );
    n++;
  }
  return n;
}
