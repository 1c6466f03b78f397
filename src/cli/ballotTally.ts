/**
 * Approval counts read from a ballot file. The counts stay inside the CLI process: the draw
 * command passes them to the mechanism and never prints them. In a module of its own so the
 * file readers (csvBallots.ts, preflibBallots.ts) and ballotFiles.ts do not import each other.
 */
export interface BallotTally {
  labels: string[];
  scores: number[];
  ballots: number;
}
