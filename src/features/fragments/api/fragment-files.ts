import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { deleteFragmentFilesResponse, fragmentFilesPlanResponse } from "../../../../shared/schemas/fragment-files";
import { apiRequest } from "../../../lib/api-client";
import { LIBRARY_QUERY_ROOT } from "../../../lib/query-client";
import { fragmentKeys } from "./keys";

/** What deleting the piece's files would remove (admins), asked for when the admin opens it. */
export function useFragmentFilesPlan(id: string, enabled: boolean) {
  return useQuery({
    queryKey: [...fragmentKeys.detail(id), "files-plan"] as const,
    queryFn: async ({ signal }) =>
      (await apiRequest(API.fragmentsFilesPlan, { params: { id }, schema: fragmentFilesPlanResponse, signal })).plan,
    enabled,
    staleTime: 0,
  });
}

/** Deletes them, no more files than `upTo` (what the admin was shown); the off-site copy only with `offsite: "delete"`. */
export function useDeleteFragmentFiles(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (query: { upTo: number; offsite: "keep" | "delete" }) =>
      apiRequest(API.fragmentsFilesDelete, { params: { id }, query, schema: deleteFragmentFilesResponse, quiet: true }),
    // Scans and batches follow through the live event the deletion sends; the Library screen's
    // counts and its kept off-site copies are read again when next shown.
    onSettled: () => {
      void queryClient.invalidateQueries({ queryKey: fragmentKeys.all });
      void queryClient.invalidateQueries({ queryKey: LIBRARY_QUERY_ROOT });
    },
  });
}
