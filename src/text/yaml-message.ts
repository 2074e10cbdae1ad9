/**
 * The part of a `yaml` error message that describes the problem, without any of the file's text.
 * yaml's messages end with a code frame (the offending line) after a line break and " at line L,
 * column C:", and some quote what they found after a colon ("Unresolved alias (...): name",
 * "Unexpected scalar token in YAML stream: \"value\""). Positions are reported separately, so only
 * the description is kept: a file holding a password or token is never echoed to a terminal or log.
 */
export function yamlProblemText(message: string): string {
  const firstLine = message.split('\n')[0] ?? '';
  const withoutPosition = firstLine.replace(/ at line \d+, column \d+:?$/, '');
  const description = withoutPosition.split(': ')[0]?.trim() ?? '';
  return description === '' ? 'unreadable YAML' : description;
}
