// A small argument reader: `command --key value --flag`. Unknown options are errors, so a
// typo never silently changes what a command does.
export interface ParsedArgs {
  readonly command: string | null;
  readonly options: Readonly<Record<string, string | true>>;
}

export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export function parseArgs(argv: readonly string[]): ParsedArgs {
  let command: string | null = null;
  const options: Record<string, string | true> = {};
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a.startsWith('--')) {
      const eq = a.indexOf('=');
      const key = eq > 0 ? a.slice(2, eq) : a.slice(2);
      if (key.length === 0) throw new UsageError(`empty option "${a}"`);
      if (eq > 0) options[key] = a.slice(eq + 1);
      else if (i + 1 < argv.length && !argv[i + 1].startsWith('--')) options[key] = argv[++i];
      else options[key] = true;
    } else if (a === '-h') options.help = true;
    else if (command === null) command = a;
    else throw new UsageError(`unexpected argument "${a}"`);
  }
  return { command, options };
}

/** Checks the options against what a command accepts and returns typed accessors. */
export function optionsFor(command: string, parsed: ParsedArgs, allowed: { values: readonly string[]; flags: readonly string[] }) {
  for (const [k, v] of Object.entries(parsed.options)) {
    if (k === 'help') continue;
    if (allowed.values.includes(k)) {
      if (v === true) throw new UsageError(`${command}: --${k} needs a value`);
    } else if (allowed.flags.includes(k)) {
      if (v !== true) throw new UsageError(`${command}: --${k} takes no value (got "${v}")`);
    } else throw new UsageError(`${command}: unknown option --${k}`);
  }
  return {
    value(name: string): string | undefined {
      const v = parsed.options[name];
      return typeof v === 'string' ? v : undefined;
    },
    required(name: string): string {
      const v = parsed.options[name];
      if (typeof v !== 'string') throw new UsageError(`${command}: --${name} is required`);
      return v;
    },
    flag(name: string): boolean {
      return parsed.options[name] === true;
    },
  };
}
