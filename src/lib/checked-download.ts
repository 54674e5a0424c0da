import { ApiError, errorFrom } from "./api-client";

/**
 * Starts the browser's download of a stored file only once the server has answered for it, so
 * a file that went a moment ago (removed by someone else, a cut connection) gives a message
 * rather than a download the browser marks failed with no word of why.
 *
 * The check asks for the file's first byte (`Range: bytes=0-0`): the same route and checks as the
 * download, at the cost of one byte. Only for routes that serve a stored file with byte ranges,
 * not for archives made on the fly (a range there would start making the whole archive).
 */
export async function checkedDownload(url: string, fileName?: string): Promise<void> {
  let response: Response;
  try {
    response = await fetch(url, { credentials: "same-origin", headers: { Range: "bytes=0-0" }, cache: "no-store" });
  } catch {
    throw new ApiError(0, "network", "The server could not be reached. Check that Platen is running.");
  }
  if (!response.ok) throw errorFrom(response.status, await response.text(), `The download failed (HTTP ${response.status}).`);
  // The answer is one byte (or the whole file, from a server that ignores ranges): not read.
  void response.body?.cancel();
  const link = document.createElement("a");
  link.href = url;
  if (fileName) link.download = fileName;
  link.rel = "noopener";
  document.body.append(link);
  link.click();
  link.remove();
}

/**
 * For a download link's onClick: a plain click goes through the check; a click with a modifier
 * (a new tab, "save link as") is left to the browser.
 */
export function isPlainClick(event: { button: number; metaKey: boolean; ctrlKey: boolean; shiftKey: boolean; altKey: boolean }): boolean {
  return event.button === 0 && !event.metaKey && !event.ctrlKey && !event.shiftKey && !event.altKey;
}
