import { queryOptions, useQuery } from "@tanstack/react-query";
import { API, apiPath } from "../../../../shared/api";
import { fragmentResponse, type Fragment } from "../../../../shared/schemas/fragments";
import { apiRequest } from "../../../lib/api-client";
import { fragmentKeys } from "./keys";

export async function getFragment(id: string, signal?: AbortSignal): Promise<Fragment> {
  const { fragment } = await apiRequest(API.fragmentsGet, {
    params: { id },
    schema: fragmentResponse,
    signal,
  });
  return fragment;
}

export const fragmentQueryOptions = (id: string) =>
  queryOptions({
    queryKey: fragmentKeys.detail(id),
    queryFn: ({ signal }) => getFragment(id, signal),
    // A missing record (404) or a malformed id (400) will not appear on a second try.
    retry: (count, error) => !("status" in error && (error.status === 404 || error.status === 400)) && count < 2,
  });

export function useFragment(id: string) {
  return useQuery(fragmentQueryOptions(id));
}

/**
 * The upright thumbnail, cut from the scan's preview. The server caches it per revision, so the
 * revision in the address makes the browser fetch a new one after every edit.
 */
export const fragmentThumbUrl = (f: Pick<Fragment, "id" | "revision">) => `${apiPath(API.fragmentsThumb, { id: f.id })}?r=${f.revision}`;

/**
 * The fragment as it came out: a small picture of its web copy once rendered (after its recipe),
 * else the cut from its scan. The address changes with the file, so a new render shows at once.
 */
export const fragmentPictureUrl = (f: Pick<Fragment, "id" | "revision" | "renderState" | "outputs">) => {
  const web = f.renderState === "done" ? f.outputs.find((o) => o.kind === "web") : undefined;
  return web
    ? `${apiPath(API.fragmentsOutputThumb, { id: f.id, kind: "web" })}?v=${encodeURIComponent(web.updatedAt)}`
    : fragmentThumbUrl(f);
};

/** A rendered file of the fragment; the server names the download after the scan and position. */
export const fragmentOutputUrl = (id: string, kind: "master" | "web") => apiPath(API.fragmentsOutput, { id, kind });

/** The scan's preview the fragments are drawn over (JPEG, long edge at most 1600 px). */
export const scanPreviewImageUrl = (scanId: string) => apiPath(API.scansPreview, { id: scanId });
