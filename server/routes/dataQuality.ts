import { apiRouter } from '../http/route';
import { CoverageSchema, DataQualitySchema } from '../../shared/schemas/dataQuality';
import { coverage, dataQuality } from '../services/dataQualityService';

export function dataQualityRoutes() {
  const api = apiRouter('/data-quality', 'Data quality');
  api.route({
    method: 'get',
    path: '/assets',
    access: 'signed-in',
    summary: 'Per-asset data quality of the stored return series',
    description: 'Volatility is annualised with the square-root-of-time rule; figures describe the stored history, not the future.',
    response: DataQualitySchema,
    handler: () => dataQuality(),
  });
  api.route({ method: 'get', path: '/coverage', access: 'signed-in', summary: 'Coverage by asset and month (heatmap data)', response: CoverageSchema, handler: () => coverage() });
  return api;
}
