import { useMutation } from "@tanstack/react-query";
import type { CreateArmInput, EditArmInput, ToolInput } from "@jogwright/shared";
import { useInvalidateArms } from "../../../lib/queries/arms.ts";
import { addTool, createArm, editArm, previewArmFile, retireTool, saveArmFile, updateTool, type SaveArmFileFields } from "../api/arms-api.ts";

export function useCreateArm() {
  const invalidate = useInvalidateArms();
  return useMutation({ mutationFn: (input: CreateArmInput) => createArm(input), onSuccess: () => invalidate() });
}

export function useEditArm(armId: number) {
  const invalidate = useInvalidateArms();
  // On 409 stale_parent too: the newer revision must show up.
  return useMutation({ mutationFn: (input: EditArmInput) => editArm(armId, input), onSettled: () => invalidate() });
}

/** Parses and checks a file on the server; saves nothing, so nothing to invalidate. */
export const usePreviewArmFile = () => useMutation({ mutationFn: (file: File) => previewArmFile(file) });

export function useSaveArmFile() {
  const invalidate = useInvalidateArms();
  return useMutation({ mutationFn: ({ file, fields }: { file: File; fields: SaveArmFileFields }) => saveArmFile(file, fields), onSuccess: () => invalidate() });
}

export function useSaveTool(armId: number) {
  const invalidate = useInvalidateArms();
  return useMutation({
    mutationFn: ({ revisionId, toolId, input }: { revisionId: number; toolId: number | null; input: ToolInput }) =>
      toolId === null ? addTool(armId, revisionId, input) : updateTool(armId, toolId, input),
    onSuccess: () => invalidate(),
  });
}

export function useRetireTool(armId: number) {
  const invalidate = useInvalidateArms();
  return useMutation({ mutationFn: (toolId: number) => retireTool(armId, toolId), onSuccess: () => invalidate() });
}
