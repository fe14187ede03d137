// The short caution shown wherever a page supports a decision.
import type { Child } from 'hono/jsx';

export const CAUTION_TEXT =
  'These figures support a decision; they do not make it. Predictions do not replace testing, and acceptance of a heat or lot follows the purchase specification and the judgement of qualified personnel.';

export function Caution(props: { children?: Child }) {
  return (
    <p class="caution" role="note">
      <strong>Caution.</strong> {props.children ?? CAUTION_TEXT}
    </p>
  );
}
