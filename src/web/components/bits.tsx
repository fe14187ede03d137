// Small shared pieces: filter forms' date window, a message for bad input, status tags.
import type { Child } from 'hono/jsx';

export function Problem(props: { message: string }) {
  return (
    <p class="notice" role="alert">
      {props.message}
    </p>
  );
}

export function Tag(props: { kind: 'good' | 'bad' | 'odd' | 'none'; children: Child }) {
  return <span class={`tag ${props.kind}`}>{props.children}</span>;
}

export function WindowInputs(props: { from?: string | null; to?: string | null }) {
  return (
    <>
      <label>
        Cast from
        <input type="date" name="from" value={props.from ?? ''} />
      </label>
      <label>
        Cast to
        <input type="date" name="to" value={props.to ?? ''} />
      </label>
    </>
  );
}

export function Select(props: { name: string; label: string; value: string | undefined; options: ReadonlyArray<{ value: string; label: string }>; any?: string }) {
  return (
    <label>
      {props.label}
      <select name={props.name}>
        {props.any !== undefined ? <option value="">{props.any}</option> : null}
        {props.options.map((o) => (
          <option value={o.value} selected={o.value === props.value}>
            {o.label}
          </option>
        ))}
      </select>
    </label>
  );
}

const ARROWS: Record<string, string> = { rising: '↗', falling: '↘', steady: '→', 'signal up': '⇈', 'signal down': '⇊', 'too few heats': '·' };

export function TrendArrow(props: { word: string }) {
  const odd = props.word.startsWith('signal');
  return (
    <span class={odd ? 'tag bad' : 'tag none'} title={`Whole-curve level trend: ${props.word}`}>
      <span class="arrow" aria-hidden="true">
        {ARROWS[props.word] ?? '?'}
      </span>{' '}
      {props.word}
    </span>
  );
}
