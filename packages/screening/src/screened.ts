import type { Anomaly3D, AnomalyClass } from '@lamina/anomalies';
import type { Evidence, Verdict } from './evidence';

export interface ScreenedAnomaly {
  anomaly: Anomaly3D;
  evidence: Evidence[];
  verdict: Verdict;
  /** The class (`classifyAnomalies`), why, and the id of the object it is an echo of. */
  classified?: { class: AnomalyClass; reason: string; echoOf?: string };
}
