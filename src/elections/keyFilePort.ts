/**
 * Where the per-election shred keys live (custody/shredLayer.ts): outside the database's rows,
 * so that neither the write-ahead log nor a database backup holds them. The use-cases see only
 * this port; src/keyfiles builds it over a directory, and tests give each database its own.
 */
export interface ElectionKeyFiles {
  /** Stores the key durably (on disk, file and directory flushed) before it resolves. Refuses to replace one. */
  write(electionId: string, key: Uint8Array): Promise<void>;
  /** The key; ElectionKeyFileMissing when it is not there or cannot be read. */
  read(electionId: string): Promise<Buffer>;
  /** Whether a key file exists for the election. */
  has(electionId: string): Promise<boolean>;
  /** Deletes the key durably (directory flushed); no error if it is already gone. */
  remove(electionId: string): Promise<void>;
  /** The election ids that have a key file. */
  list(): Promise<string[]>;
}
