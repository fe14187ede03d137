// Certificate checks as a person reads them: the verdict, the sentence with the numbers, and the
// evidence (threshold and values) one click away.
import type { CheckEvidence } from '../../hardenability/types.ts';
import { Tag } from './bits.tsx';

const KIND = { pass: 'good', fail: 'bad', warn: 'odd', not_applicable: 'none' } as const;

function Evidence(props: { value: unknown }) {
  return <pre class="evidence">{JSON.stringify(props.value, (_k, v) => (typeof v === 'number' && !Number.isInteger(v) ? Number(v.toPrecision(4)) : v), 2)}</pre>;
}

export function CheckList(props: { checks: ReadonlyArray<CheckEvidence & { testId?: number }> }) {
  if (props.checks.length === 0) return <p class="empty">No checks apply.</p>;
  return (
    <ul class="checks">
      {props.checks.map((c) => (
        <li class="check" data-check={c.check} data-verdict={c.verdict}>
          <Tag kind={KIND[c.verdict]}>{c.verdict.replace('_', ' ')}</Tag> <strong>{c.title}</strong>
          {c.testId !== undefined ? <small> (test #{c.testId})</small> : null}: {c.summary}
          <details>
            <summary>Evidence</summary>
            {Object.keys(c.threshold).length ? (
              <p>
                Threshold:{' '}
                {Object.entries(c.threshold)
                  .map(([k, v]) => `${k} = ${v}`)
                  .join('; ')}
              </p>
            ) : null}
            <Evidence value={c.values} />
          </details>
        </li>
      ))}
    </ul>
  );
}
