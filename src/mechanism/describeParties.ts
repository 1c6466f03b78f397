import type { PrivacyCost, Neighbour } from './draw.ts';
import { factorExplained } from './plainFactor.ts';
import { factorAtMost } from './statement.ts';
import { replacementPolicySentence, replacementPrivacySentence } from './describeReplacements.ts';

/**
 * What each party can learn, in plain words, separately for the members, the public, the
 * organiser and whoever runs the site (the operator): how a member voted, whether a member voted, what the organiser saw while voting
 * ran, and whether anyone voted at all. Each sentence is a claim about that party and must hold
 * against it (the tests check them from that party's side): where the organiser learns more than
 * the public, the text says so. Shown on the ballot page before voting and on the result page.
 */
export interface PartySettings {
  neighbour: Neighbour;
  publishTurnout: boolean;
  /** Longest private preview of a drawn result, in whole hours (at most 48). */
  previewHours: number;
  /**
   * Who votes, for what the privacy ledger tells each party: a roster (charged per member) or
   * printed codes (the organiser's member group). Absent: the ledger is not described.
   */
  electorate?: 'roster' | 'printed';
  /**
   * Replacement codes sent, once the result is drawn (roster elections; the statement's
   * `replacements`). Before the draw a roster electorate states the rule instead.
   */
  replacements?: number;
}

export interface PartyText {
  party: 'members' | 'public' | 'organiser' | 'operator';
  heading: string;
  sentences: string[];
}

function hours(n: number): string {
  return `${n} hour${n === 1 ? '' : 's'}`;
}

export function describeParties(privacy: PrivacyCost, s: PartySettings): PartyText[] {
  const how = factorExplained(factorAtMost(privacy.howVoted), s.neighbour === 'replace-one' ? 'ε' : '2ε');
  // Under replace-one voting or not is a monotone change and costs ε/2 (draw.ts); under add-remove, ε.
  const whetherFactor = factorExplained(factorAtMost(privacy.whetherVoted), s.neighbour === 'replace-one' ? 'ε/2' : 'ε');
  const howVoted = `How a member voted: with the privacy setting at ε = ${privacy.epsilon}, whatever one member ticks can at most multiply or divide the chance of any announced result by ${how}. No count of approvals is ever shown.`;
  const whetherVoted = s.publishTurnout
    ? 'Whether a member voted: the organiser chose before opening to publish the turnout, so the exact number of ballots is published and is not protected. It shows how many members voted, and whether a given member voted to anyone who knows what all the others did.'
    : s.neighbour === 'replace-one'
      ? `Whether a member voted: protected at least as well as the ballot itself, since not voting looks the same as a ballot with nothing ticked, and twice as strongly: voting or not only adds one ballot, which can raise counts but never lower any, so it can at most multiply or divide the chance of any announced result by ${whetherFactor}. The turnout is never published.`
      : `Whether a member voted: voting or not can at most multiply or divide the chance of any announced result by ${whetherFactor}. The turnout is never published.`;
  const liveForOthers = 'While voting runs: nothing about who has voted, or how many, is shown, only the opening and closing times.';
  const anyone = 'Whether anyone voted at all is shown: with no ballots no winner is drawn, and the result says so.';
  const published = `Every drawn result is published, at the latest ${hours(s.previewHours)} after the draw, so a draw cannot be kept back and made again.`;

  const organiserTurnout = s.publishTurnout
    ? `After the draw the organiser sees the exact turnout in the preview, up to ${hours(s.previewHours)} before everyone else.`
    : 'The organiser is never shown the turnout either: only whether anyone voted, with the result.';
  const ledger = s.electorate ? ledgerSentences(s.electorate) : null;
  const codes = { howVoted: privacy.howVoted, whetherVoted: s.publishTurnout ? null : privacy.whetherVoted };
  const replacement =
    s.replacements !== undefined
      ? replacementPrivacySentence(s.replacements, codes)
      : s.electorate === 'roster'
        ? replacementPolicySentence(codes)
        : null;
  const organiserReplacement =
    replacement === null
      ? null
      : 'Lost codes: for an address that asked for a replacement, the organiser’s mail page shows that a replacement message was queued, sent or failed; never a code, and nothing that pairs the new code with the lost one.';
  const parties: PartyText[] = [
    {
      party: 'members',
      heading: 'What other members can learn about you',
      sentences: [
        'Other members learn exactly what the public learns, below. Your receipt lets you check that your ballot was counted; it does not show how you voted. The organiser and the public never see your receipt unless you show it to them. Whoever runs this site does: the server makes it when you cast, stores a keyed hash of it whose key it holds, and sees it again when it is checked.',
      ],
    },
    {
      party: 'public',
      heading: 'What anyone can learn from the published result',
      sentences: [
        howVoted,
        whetherVoted,
        ...(replacement ? [replacement] : []),
        liveForOthers,
        anyone,
        published,
        ...(ledger ? [ledger.public] : []),
      ],
    },
    {
      party: 'organiser',
      heading: 'What the organiser can learn',
      sentences: [
        `How a member voted: the same as the public. The organiser is shown the drawn winners, never a count of approvals, and sees them up to ${hours(s.previewHours)} before they are published.`,
        'Whether a member voted, while voting runs: the organiser sees how many codes were issued and withdrawn, never how many ballots were cast. The organiser holds every ballot code, but trying a code shows nothing before casting, and casting with it uses it up: the member would then find their code already used and can raise it. To make even that impossible, codes should be handed out so that nobody knows who got which (slips drawn from a box, sealed envelopes).',
        organiserTurnout,
        'Whether anyone voted at all: the organiser learns it with the drawn result, shortly before the public does.',
        ...(ledger ? [ledger.organiser] : []),
        ...(organiserReplacement ? [organiserReplacement] : []),
      ],
    },
  ];
  parties.push({ party: 'operator', heading: 'What whoever runs this site can learn', sentences: operatorSentences(s.electorate, ledger) });
  return parties;
}

/**
 * Whoever runs the server (README, threat model): what they can see, live and at rest, beyond any
 * other party. The sentences above hold against members, the public and the organiser; these say
 * where they do not hold against the operator. Per electorate kind when it is known.
 */
function operatorSentences(electorate: PartySettings['electorate'], ledger: { operator: string } | null): string[] {
  const common = [
    'Whoever runs this site (its operator) is trusted with more than anyone else: the protections above hold against members, the public and the organiser, not against them.',
    'While voting runs, the database rows show how many ballots have been cast at any moment. Each sealed ballot is stored in the same database transaction that uses up its code, so the database’s own transaction ids pair them, until the tally rewrites every ballot and code row of the vote in random order; older copies of the rows stay on disk until the database reclaims them, and in its log and backups.',
    'The server, and any proxy in front of it, sees the network address of every request, ballot casts and receipt checks included. The site logs no address; its attempt limits keep them, for each limit’s window, only under an unkeyed hash, which anyone who can read the database can reverse by trying addresses.',
    'At the tally the server’s memory holds the election key, unlocked with the organiser’s passphrase, and the counts: someone in control of the server then could read every ballot. Until the shred, the key directory holds the key file that every stored ballot also needs.',
  ];
  const kind =
    electorate === 'roster'
      ? [
          'The invitations: the site sends each member’s code to their address. Until the mail server accepts a message it exists only in the server’s memory; after that, whoever runs the mail server, or reads the outbox folder of .eml files when no mail server is set up, can read each address with its code. With the code rows, that tells who has voted; with the transaction ids above, which sealed ballot is theirs, and at the tally, how they voted.',
        ]
      : electorate === 'printed'
        ? [
            'Printed codes: the site never learns who holds which code, so what the operator can pair is a code with its ballot, not with a member, unless they learn who got the code (from whoever handed the codes out, or from the network address a member voted from).',
          ]
        : [];
  return [...common, ...kind, ...(ledger ? [ledger.operator] : [])];
}

/** What the privacy ledger tells each party (README, threat model); tested from each side in test/integration/web/ledger-members.test.ts. */
function ledgerSentences(electorate: 'roster' | 'printed'): { public: string; organiser: string; operator: string } {
  if (electorate === 'roster') {
    return {
      public:
        "The privacy ledger: this vote is charged to each member of the roster, under a keyed hash of their address, never the address. The published statement gives the most any one member has spent over 12 months, counting every vote on this site over their address, other organisers' included; a figure higher than this roster's own votes explain shows that someone on it also voted in another electorate here, or held a replacement code (charged twice), never who, where or how.",
      organiser:
        'From the privacy ledger: the same figure as the public and, when opening is refused for the budget, the most a member would reach. A roster holding one real address would tell its organiser that person’s 12-month total on this site, though not which votes nor how they voted.',
      operator:
        'Whoever runs this site holds the key the addresses are hashed under, so they can check whether a given address was in the electorate of any roster vote here. The ledger never tells them how anyone voted.',
    };
  }
  return {
    public:
      "The privacy ledger: this vote is charged to the organiser's own member group, whose public ledger page lists every draw over it. The site does not know who is in the group, so someone who also votes in another group is counted in each separately.",
    organiser: 'From the privacy ledger: the same as the public.',
    operator: 'Whoever runs this site learns from the ledger what the public does: for printed codes it holds nothing about any member.',
  };
}
