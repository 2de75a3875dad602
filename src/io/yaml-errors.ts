/** Shared wording for YAML syntax errors (the `yaml` package appends position and a code excerpt). */

/** The first line of a `yaml` error message, without its " at line L, column C:" tail (the issue carries the line). */
export function yamlProblemText(message: string): string {
  const first = message.split('\n')[0];
  return first.replace(/ at line \d+, column \d+:?\s*$/, '');
}
