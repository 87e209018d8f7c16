import { defectCreatedSchema, photosUploadedSchema } from "@shared/api/defects";
import { i18n } from "@/i18n";
import { api, apiUpload } from "@/lib/api-client";
import type { OutboxTransport } from "./outbox";

/** The real API behind the outbox: one photo per request, so each has its own progress and retry. */
export const apiTransport: OutboxTransport = {
  createDefect: (body) => api("/defects", { method: "POST", body, schema: defectCreatedSchema }),
  async uploadPhoto(defectId, photo, onProgress) {
    const file = new File([photo.blob], photo.name, { type: photo.type });
    const res = await apiUpload(`/defects/${defectId}/photos`, file, {
      field: "photos",
      fields: { client_keys: photo.key },
      schema: photosUploadedSchema,
      onProgress: (p) => onProgress(p.sent ? 1 : p.fraction),
    });
    const stored = res.photos[0];
    if (!stored) throw new Error(i18n.t("yard:outbox.noPhotoStored"));
    return { id: stored.id };
  },
};
