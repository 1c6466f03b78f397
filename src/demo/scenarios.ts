/**
 * The two sample elections. Invented data, for the demo only: each option carries the share of
 * members who tick it, and the demo's seeded generator turns those shares into plausible ballots.
 */
export interface DemoScenario {
  title: string;
  description: string;
  /** A name for the member group (the privacy ledger's unit, where the ledger exists). */
  group: string;
  options: { label: string; description: string; share: number }[];
  seats: number;
  epsilon: string;
  codes: number;
  voters: number;
}

export const ROWING_CLUB: DemoScenario = {
  title: 'Name the new coxed four (sample election)',
  description:
    'The rowing club has a new coxed four arriving in spring. Tick every name you would be happy to row under; ' +
    'one name is drawn when voting ends. This is a sample election made by the demo.',
  group: 'Rowing club members (sample)',
  options: [
    { label: 'Kingfisher', description: 'Small, quick and bright blue.', share: 0.62 },
    { label: 'Heron', description: 'Patient on the riverbank, fast when it counts.', share: 0.5 },
    { label: 'Second Wind', description: 'For the last five hundred metres.', share: 0.44 },
    { label: 'Mayfly', description: 'Light, and out on the water at dawn.', share: 0.3 },
    { label: "Otter's Wake", description: '', share: 0.22 },
    { label: 'Ninth Stroke', description: "After the club's first race, which took nine strokes to lose.", share: 0.12 },
  ],
  seats: 1,
  epsilon: '1',
  codes: 40,
  voters: 25,
};

export const TENANTS: DemoScenario = {
  title: 'Which three repairs first? (sample election)',
  description:
    "The tenants' association can fund three repairs this year. Tick every repair you think should come first; " +
    'three are drawn. This is a sample election made by the demo.',
  group: "Tenants' association members (sample)",
  options: [
    { label: 'Fix the lift in block B', description: 'Out of order twice a month since March.', share: 0.72 },
    { label: 'New locks on the entrance doors', description: '', share: 0.58 },
    { label: 'Treat the damp in the basement flats', description: 'Four flats affected.', share: 0.55 },
    { label: 'Brighter stairwell lighting', description: 'Motion-sensing lamps on every landing.', share: 0.4 },
    { label: 'Upgrade the intercom', description: '', share: 0.33 },
    { label: 'Roof over the bike store', description: '', share: 0.28 },
    { label: 'An enclosure for the bins', description: 'Keeps foxes out of the rubbish.', share: 0.22 },
    { label: 'Repaint the courtyard railings', description: '', share: 0.12 },
  ],
  seats: 3,
  epsilon: '1.5',
  codes: 30,
  voters: 24,
};
