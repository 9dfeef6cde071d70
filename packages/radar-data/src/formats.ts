/** SEG-Y data sample format codes Lamina reads and writes (binary header bytes 3225-3226). */
export type SampleFormat = 1 | 2 | 3 | 5 | 8;

export const SAMPLE_FORMATS: Readonly<Record<SampleFormat, { bytes: number; name: string }>> = {
  1: { bytes: 4, name: 'IBM float' },
  2: { bytes: 4, name: 'int32' },
  3: { bytes: 2, name: 'int16' },
  5: { bytes: 4, name: 'IEEE float' },
  8: { bytes: 1, name: 'int8' },
};

export function isSampleFormat(code: number): code is SampleFormat {
  return code === 1 || code === 2 || code === 3 || code === 5 || code === 8;
}

/** Every code SEG-Y rev 2.0 defines (used only to tell byte orders apart when rev 2 gives no constant). */
export function isDefinedFormatCode(code: number): boolean {
  return (code >= 1 && code <= 12) || code === 15 || code === 16;
}

export const SAMPLE_FORMAT_LIST = '1 (IBM float), 2 (int32), 3 (int16), 5 (IEEE float) or 8 (int8)';
