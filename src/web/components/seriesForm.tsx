// The form that picks a series: grade, mill, distance and cast-date window.
import type { SeriesChoice } from '../data/seriesPicker.ts';
import { Select, WindowInputs } from './bits.tsx';

export function SeriesForm(props: { action: string; choice: SeriesChoice; distance?: boolean; anyMill?: boolean; extra?: unknown }) {
  const c = props.choice;
  const millOptions = c.mills.map((m) => ({ value: m, label: c.suppliers.includes(m) ? m : `${m} (no heats)` }));
  return (
    <form class="filters" method="get" action={props.action}>
      <Select name="grade" label="Grade" value={c.grade} options={c.grades.map((g) => ({ value: g, label: g }))} />
      <Select name="mill" label="Mill" value={c.mill || undefined} any={props.anyMill ? 'All mills' : undefined} options={millOptions} />
      {props.distance === false ? null : (
        <Select name="distance" label="Distance" value={c.distanceMm === null ? undefined : String(c.distanceMm)} options={c.distances.map((d) => ({ value: String(d.mm), label: d.label }))} />
      )}
      <WindowInputs from={c.from} to={c.to} />
      {props.extra as never}
      <button type="submit">Show</button>
    </form>
  );
}
