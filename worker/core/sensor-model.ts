/**
 * Any sensor type's model, by its kind: the radars (primary, secondary) from sensor.ts, the 1090 MHz receivers
 * (adsb, mlat) from receiver.ts. Kept apart from both so that receiver.ts can build on sensor.ts's pattern builder,
 * link formulas and transponder classes without either importing the other.
 */
import { isReceiverKind } from '../../shared/sensor-kinds.ts';
import { buildReceiverSensorModel } from './receiver.ts';
import {
  buildRadarSensorModel,
  type ReceiverTypeSpec,
  type SensorModel,
  type SensorTypeSpec,
} from './sensor.ts';

export function buildSensorModel(spec: SensorTypeSpec, where: string): SensorModel {
  const kind: unknown = (spec as { kind?: unknown } | null)?.kind;
  if (typeof kind === 'string' && isReceiverKind(kind)) {
    return buildReceiverSensorModel(spec as ReceiverTypeSpec, where);
  }
  return buildRadarSensorModel(spec, where);
}
