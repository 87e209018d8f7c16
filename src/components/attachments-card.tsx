import { useTranslation } from "react-i18next";
import { useRef, useState } from "react";
import type { UseMutationResult } from "@tanstack/react-query";
import type { Attachment } from "@shared/api/investigations";
import { Card } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { ProgressBar } from "@/components/ui/progress";
import type { UploadProgress } from "@/lib/api-client";
import { bytes, dateTime } from "@/lib/format";

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";
const MAX_FILES = 5;
const MAX_BYTES = 20 * 1024 * 1024;

export type AttachmentUpload = UseMutationResult<unknown, Error, { files: File[]; onProgress: (index: number, p: UploadProgress) => void }>;

/**
 * The files of a record (an investigation, a claim): the list with download links and, for those
 * who may add, a multi-file input that uploads one file at a time with its progress. The limits
 * are the server's (5 files, 20 MB each), checked here first so nobody waits for a refusal.
 */
export function AttachmentsCard({
  attachments,
  upload,
  canUpload,
  hint,
  testIdPrefix = "",
}: {
  attachments: Attachment[];
  upload: AttachmentUpload;
  canUpload: boolean;
  hint: string;
  testIdPrefix?: string;
}) {
  const { t } = useTranslation();
  const input = useRef<HTMLInputElement>(null);
  const [progress, setProgress] = useState<{ index: number; count: number; name: string; p: UploadProgress } | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const start = (files: File[]) => {
    setProblem(null);
    if (!files.length) return;
    if (files.length > MAX_FILES) return setProblem(t("attachments.tooMany", { n: MAX_FILES }));
    const big = files.find((f) => f.size > MAX_BYTES);
    if (big) return setProblem(t("attachments.tooBig", { name: big.name, size: bytes(big.size) }));
    upload.mutate(
      { files, onProgress: (index, p) => setProgress({ index, count: files.length, name: files[index]!.name, p }) },
      {
        onSettled: () => {
          setProgress(null);
          if (input.current) input.current.value = "";
        },
      },
    );
  };
  return (
    <Card title={t("attachments.title", { n: attachments.length })}>
      <div className="space-y-3">
        {attachments.length ? (
          <ul className="divide-y divide-ink-100" data-testid={`${testIdPrefix}attachments`}>
            {attachments.map((a) => (
              <li key={a.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 py-2 text-sm" data-testid={`${testIdPrefix}attachment`}>
                <a href={a.url} download={a.fileName} className={`${link} inline-flex min-h-11 items-center`}>
                  {a.fileName}
                </a>
                <span className="text-ink-600">
                  {a.mime} · {bytes(a.bytes)} · {a.by ?? ""} {dateTime(a.at)}
                </span>
              </li>
            ))}
          </ul>
        ) : (
          <p className="text-sm text-ink-600">{t("attachments.none")}</p>
        )}
        {canUpload ? (
          <div className="space-y-2">
            <label className="flex flex-col gap-1">
              <span className="text-sm font-semibold text-ink-800">{hint}</span>
              <input
                ref={input}
                type="file"
                multiple
                disabled={upload.isPending}
                onChange={(e) => start([...(e.target.files ?? [])])}
                className="min-h-11 text-sm file:mr-3 file:min-h-11 file:rounded-md file:border file:border-ink-300 file:bg-white file:px-4 file:font-semibold"
                data-testid={`${testIdPrefix}attachment-input`}
              />
            </label>
            {progress ? (
              <ProgressBar
                label={
                  progress.count > 1
                    ? t("attachments.uploadingOf", { name: progress.name, i: progress.index + 1, n: progress.count })
                    : t("attachments.uploading", { name: progress.name })
                }
                value={progress.p.sent ? null : progress.p.fraction}
                detail={progress.p.sent ? t("attachments.storing") : bytes(progress.p.loaded)}
              />
            ) : null}
          </div>
        ) : null}
        {problem ? <Notice tone="error">{problem}</Notice> : null}
        {upload.isError ? <Notice tone="error">{upload.error.message}</Notice> : null}
      </div>
    </Card>
  );
}
