import { useMutation, useQueryClient } from "@tanstack/react-query";
import { API } from "../../../../shared/api";
import { scanResponse, type SetResolutionBody } from "../../../../shared/schemas/scans";
import { apiRequest } from "../../../lib/api-client";
import { scanQueryOptions } from "./get-scan";
import { scanKeys } from "./keys";

/** Sets the DPI a scan was made at; its approved pieces are rendered again with it. */
export function useSetResolution(id: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: async (body: SetResolutionBody) =>
      (await apiRequest(API.scansSetResolution, { params: { id }, body, schema: scanResponse })).scan,
    onSuccess: (scan) => {
      queryClient.setQueryData(scanQueryOptions(scan.id).queryKey, scan);
      void queryClient.invalidateQueries({ queryKey: scanKeys.lists() });
      // Fragment sizes follow the new resolution.
      void queryClient.invalidateQueries({ queryKey: ["fragments"] });
    },
  });
}
