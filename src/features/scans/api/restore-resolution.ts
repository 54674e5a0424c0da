import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { scanResponse } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { scanQueryOptions } from "./get-scan";
import { scanKeys } from "./keys";

/** Undoes a resolution set by hand: the file's own figure again (the studio's assumed one if it has none). */
export function useRestoreResolution(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async () => (await apiRequest(API.scansRestoreResolution, { params: { id }, schema: scanResponse })).scan,
    onSuccess: (scan) => {
      queryClient.setQueryData(scanQueryOptions(scan.id).queryKey, scan);
      void queryClient.invalidateQueries({ queryKey: scanKeys.lists() });
      void queryClient.invalidateQueries({ queryKey: ["fragments"] });
    },
  });
}
