import { ApiError } from "./api-client";

export interface DownloadProgress {
  loaded: number;
  /** 0…1 when the server gave the size, else null. */
  fraction: number | null;
}

/**
 * Fetches a file of the API (a workbook) as a blob, reading it in chunks to report progress, then
 * hands it to the browser as a download under the server's file name. Fetched rather than linked so
 * a refusal shows the server's message beside the button instead of a page of JSON.
 */
export async function downloadFile(path: string, fallbackName: string, onProgress: (p: DownloadProgress) => void): Promise<{ name: string; size: number }> {
  let res: Response;
  try {
    res = await fetch(`/api${path}`, { credentials: "same-origin" });
  } catch {
    throw new ApiError(0, "network", "No connection to the server. Check the network and try again.");
  }
  if (!res.ok) {
    const body = (await res.json().catch(() => undefined)) as { error?: { code?: string; message?: string; details?: unknown } } | undefined;
    throw new ApiError(res.status, body?.error?.code ?? "http_error", body?.error?.message ?? `The server answered ${res.status}.`, body?.error?.details);
  }
  const total = Number(res.headers.get("content-length")) || 0;
  const chunks: Uint8Array<ArrayBuffer>[] = [];
  let loaded = 0;
  const reader = res.body?.getReader();
  if (reader) {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      chunks.push(value);
      loaded += value.byteLength;
      onProgress({ loaded, fraction: total ? Math.min(1, loaded / total) : null });
    }
  } else {
    const buf = new Uint8Array(await res.arrayBuffer());
    chunks.push(buf);
    loaded = buf.byteLength;
  }
  const name = /filename="?([^";]+)"?/.exec(res.headers.get("content-disposition") ?? "")?.[1] ?? fallbackName;
  const blob = new Blob(chunks, { type: res.headers.get("content-type") ?? "application/octet-stream" });
  const url = URL.createObjectURL(blob);
  const a = document.createElement("a");
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  // The browser has taken the file once the click returns; free the memory a moment later.
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
  return { name, size: loaded };
}
