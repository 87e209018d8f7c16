/**
 * The level names of categorical terms that the product makes itself (not plant data): the buckets of
 * the position in the sequence, the two transition levels and "<caster> strand <n>". The server
 * computes, sorts and stores them in English (they are keys: the reference level, a risk model's
 * terms); only where a level is shown is it said in the reader's language, from the catalogue
 * `common`, under `terms.levels`. Every other level (a grade, a grade family, a caster code) is plant
 * data and is shown as it is.
 */

/** A level's catalogue key under `terms.levels` and the values its text takes. */
export interface LevelWord {
  key: string;
  values: Record<string, string>;
}

/** The fixed levels, by their English (as adjusted.ts SEQUENCE_LEVELS, strata.ts, training-data.ts make them). */
const FIXED = new Map<string, string>([
  ["1st heat", "firstHeat"],
  ["2nd–3rd heat", "secondThirdHeat"],
  ["4th heat on", "fourthHeatOn"],
  ["unknown", "unknown"],
  ["transition", "transition"],
  ["not transition", "notTransition"],
]);

/** A strand as the server names it in SQL: `<caster code> || ' strand ' || <strand no>`. */
const STRAND = /^(.+) strand (\d+)$/;

/** The catalogue key (under `terms.levels`) and values of a level of ours; null for plant data. */
export function levelWord(level: string): LevelWord | null {
  const key = FIXED.get(level);
  if (key) return { key: `levels.${key}`, values: {} };
  const strand = STRAND.exec(level);
  if (strand) return { key: "levels.strand", values: { caster: strand[1]!, strand: strand[2]! } };
  return null;
}

/**
 * A level in the reader's words, given how the language says a `terms` key (`say(key, values)`,
 * undefined where the catalogue lacks it): the level as it is for plant data or a missing text.
 */
export function levelSaid(level: string, say: (key: string, values: Record<string, string>) => string | undefined): string {
  const word = levelWord(level);
  return (word && say(word.key, word.values)) ?? level;
}
