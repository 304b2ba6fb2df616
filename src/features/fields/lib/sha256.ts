/** The SHA-256 of a file as lower-case hex (WebCrypto), as the server keys stored files. */
export async function sha256Hex(file: Blob): Promise<string> {
  const digest = await crypto.subtle.digest('SHA-256', await file.arrayBuffer());
  return Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, '0')).join('');
}

/** A file's text as UTF-8 (FileReader, which every browser and test DOM has). */
export function readText(file: Blob): Promise<string> {
  return new Promise((resolve, reject) => {
    const r = new FileReader();
    r.onload = () => resolve(String(r.result));
    r.onerror = () => reject(new Error(`the file could not be read: ${r.error?.message ?? 'unknown error'}`));
    r.readAsText(file);
  });
}
