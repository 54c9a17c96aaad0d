/**
 * Files the client writes: downloads of text. The station table (`stationCsv`)
 * and file names (`fileName`) are the presentation module's, shared with the
 * command line, and re-exported here.
 */
export { fileName, stationCsv } from '../../shared-types/present.js';

/** Offers text as a file download. */
export function download(text: string, name: string, type: string): void {
  const url = URL.createObjectURL(new Blob([text], { type }));
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}
