/** What a command may write to; passed in so tests capture output without a child process. */
export interface CliIo {
  stdout(text: string): void;
  stderr(text: string): void;
}

/** A command returns its exit code: 0 done, 2 bad input, 1 anything else. */
export type Command = {
  name: string;
  usage: string;
  run(args: string[], io: CliIo): Promise<number>;
};
