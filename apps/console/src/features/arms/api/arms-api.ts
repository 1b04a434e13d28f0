import {
  armDetailSchema,
  armUploadPreviewResponseSchema,
  armUploadSavedResponseSchema,
  toolResponseSchema,
  type ArmDetail,
  type ArmUploadPreview,
  type CreateArmInput,
  type EditArmInput,
  type Tool,
  type ToolInput,
} from "@jogwright/shared";
import { apiRequest, apiUpload } from "../../../lib/api-client.ts";

/** The arm library's requests; the queries and their keys are in lib/queries/arms.ts (shared by every feature). */

export const createArm = (input: CreateArmInput): Promise<ArmDetail> => apiRequest("/api/arms", { method: "POST", body: input, schema: armDetailSchema });

/** A new revision of the arm (the server never changes a revision in place). */
export const editArm = (armId: number, input: EditArmInput): Promise<ArmDetail> => apiRequest(`/api/arms/${armId}`, { method: "PUT", body: input, schema: armDetailSchema });

/** The file parsed and checked, nothing saved: the SI arm and σ at the zero pose (a 422 lists every problem with its line and field). */
export async function previewArmFile(file: File): Promise<ArmUploadPreview> {
  const form = new FormData();
  form.append("file", file);
  return (await apiUpload("/api/arms/upload", form, armUploadPreviewResponseSchema)).preview;
}

export interface SaveArmFileFields {
  name: string;
  description: string;
  note: string;
}

/** The same file saved as a new arm (revision 1); the fields go before the file so the server has them when it reads it. */
export async function saveArmFile(file: File, fields: SaveArmFileFields): Promise<ArmDetail> {
  const form = new FormData();
  form.append("name", fields.name);
  form.append("description", fields.description);
  form.append("note", fields.note);
  form.append("file", file);
  const { arm, revisions } = await apiUpload("/api/arms/upload?save=1", form, armUploadSavedResponseSchema);
  return { arm, revisions };
}

export const addTool = async (armId: number, revisionId: number, input: ToolInput): Promise<Tool> =>
  (await apiRequest(`/api/arms/${armId}/revisions/${revisionId}/tools`, { method: "POST", body: input, schema: toolResponseSchema })).tool;

export const updateTool = async (armId: number, toolId: number, input: ToolInput): Promise<Tool> =>
  (await apiRequest(`/api/arms/${armId}/tools/${toolId}`, { method: "PUT", body: input, schema: toolResponseSchema })).tool;

export const retireTool = async (armId: number, toolId: number): Promise<Tool> =>
  (await apiRequest(`/api/arms/${armId}/tools/${toolId}/retire`, { method: "POST", body: {}, schema: toolResponseSchema })).tool;
