/** Types for the parts of node-record-lpcm16 1.0.1 that bearline uses (the package ships none). */
declare module 'node-record-lpcm16' {
  import type { ChildProcess } from 'node:child_process';
  import type { Readable } from 'node:stream';

  export interface RecordOptions {
    recorder: 'sox' | 'rec' | 'arecord';
    sampleRate: number;
    channels: number;
    /** 'raw' gives headerless samples; the package's default is 'wav'. */
    audioType: 'raw' | 'wav';
    device?: string;
  }

  export interface Recording {
    /** The spawned recorder. */
    readonly process: ChildProcess;
    stream(): Readable;
    stop(): void;
  }

  const lib: { record(options: RecordOptions): Recording };
  export default lib;
}
