/**
 * A small glob matcher for the `columnsByPattern` setting (VS Code's own glob matching is not
 * reachable from plain Node tests). Supports `**`, `*`, `?`, `{a,b}` and `[...]` classes.
 */
export function globToRegExp(glob: string): RegExp {
  let out = '';
  let braceDepth = 0;
  for (let i = 0; i < glob.length; i++) {
    const c = glob[i]!;
    if (c === '*') {
      if (glob[i + 1] === '*') {
        // `**/` matches zero or more whole directories; a trailing `**` matches anything.
        const slashAfter = glob[i + 2] === '/';
        out += slashAfter ? '(?:.*/)?' : '.*';
        i += slashAfter ? 2 : 1;
      } else {
        out += '[^/]*';
      }
    } else if (c === '?') out += '[^/]';
    else if (c === '{') {
      braceDepth++;
      out += '(?:';
    } else if (c === '}' && braceDepth > 0) {
      braceDepth--;
      out += ')';
    } else if (c === ',' && braceDepth > 0) out += '|';
    else if (c === '[') {
      const close = glob.indexOf(']', i + 1);
      if (close < 0) out += '\\[';
      else {
        const body = glob.slice(i + 1, close).replace(/^!/, '^').replace(/\\/g, '\\\\');
        out += `[${body}]`;
        i = close;
      }
    } else out += c.replace(/[.+^$()|\\\]]/g, '\\$&');
  }
  return new RegExp(`^${out}$`);
}
