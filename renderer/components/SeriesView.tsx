import { useMemo, useState } from 'react';
import type { Series } from '../../app/core/model/report.ts';
import { chartForSeries, heightForSeries } from '../charts.ts';
import { EChart } from './EChart.tsx';
import { SeriesTable } from './SeriesTable.tsx';
import { isInstant, withTimesInWords } from '../format.ts';

/** A chart from app/charts when a builder exists for the series, with its table one click away. */
export function SeriesView({ series }: { series: Series }) {
  const option = useMemo(() => chartForSeries(series), [series]);
  const [asTable, setAsTable] = useState(option === null);
  const unit = series.unit ? withTimesInWords(series.unit) : '';
  const overTime = series.x.length > 0 && series.x.every(isInstant);
  return (
    <figure className="series">
      <figcaption>
        <span>{series.name}{unit ? ` (${unit})` : ''}{overTime && !unit.includes('UTC') ? ' · times in UTC' : ''}</span>
        {option && <button type="button" className="button small" onClick={() => setAsTable(!asTable)}>{asTable ? 'Show chart' : 'Show table'}</button>}
      </figcaption>
      {option && !asTable ? <EChart option={option} label={series.name} height={heightForSeries(series)} /> : <SeriesTable series={series} />}
    </figure>
  );
}
