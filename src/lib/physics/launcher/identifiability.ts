// Which fitted parameters the data determine (physics.md §5: "say when a parameter is not
// identifiable … instead of returning a number that means nothing"), in plain words.
//
// A parameter is reported as not determined when the data cannot carry it at all (no flight data
// for drag, one fill pressure for a pressure term), when it lies in the numerical null space of
// J (rank loss), or when its 95 % half-width exceeds UNDETERMINED_SPAN_FRACTION of a plausible
// span: J has full rank but the data do not narrow it to a useful range (e.g. C_D from impacts
// 2 m from the muzzle).

import type { LeastSquaresResult } from '../fit/least-squares';
import { PARAMETER_LABELS, dragLabel, idealGasWork, type LauncherModel, type ParameterName } from './model';
import type { PreparedShot } from './fit';

export interface ParameterReport {
	name: ParameterName;
	label: string;
	unit: string;
	value: number;
	/** Infinity when not determined. */
	standardError: number;
	confidence95: { lower: number; upper: number };
	/** False when the data cannot determine it; `reason` says why in plain words. */
	identifiable: boolean;
	reason: string | null;
	/** Which bound it ended on, if any. */
	atBound: 'lower' | 'upper' | null;
}

const UNDETERMINED_SPAN_FRACTION = 0.5;
/** Plausible spans of the dimensionless and angular parameters; the others scale with the shots. */
const FIXED_SPAN: Partial<Record<ParameterName, number>> = {
	efficiency: 1,
	pressureSlope: 1,
	dragCoefficient: 2,
	elevationBias: 10,
	/** Air valves open within about 0.1 s. */
	openingTime: 0.1
};

function mean(xs: number[]): number {
	return xs.length ? xs.reduce((s, v) => s + v, 0) / xs.length : 0;
}

/** Spans that scale with the launcher: the mean gas work (E), the bore area (C·A_v), the mean driving force (F). */
function launcherSpans(shots: PreparedShot[]): Partial<Record<ParameterName, number>> {
	const work = shots.map((s) => {
		const r = idealGasWork(s.setup);
		return r.ok ? r.gasWorkJ : 0;
	});
	const rig = shots[0]?.setup.rig;
	const boreArea = rig ? (Math.PI * rig.boreDiameterM ** 2) / 4 : 1;
	return {
		energyOffset: mean(work),
		friction: mean(shots.map((s) => s.setup.fillGaugePa * boreArea)),
		valveArea: boreArea
	};
}

export function parameterReports(
	model: LauncherModel,
	names: ParameterName[],
	ls: LeastSquaresResult,
	shots: PreparedShot[],
	/** The fit stopped early: its Jacobian says nothing about identifiability, so no rank is quoted. */
	stopped = false
): ParameterReport[] {
	const hasFlightData = shots.some((s) => s.observations.some((o) => o.kind !== 'muzzleSpeed'));
	const hasImpacts = shots.some((s) => s.observations.some((o) => o.kind === 'impactHeight'));
	const hasSpeeds = shots.some((s) => s.observations.some((o) => o.kind === 'muzzleSpeed'));
	const distinctPressures = new Set(shots.map((s) => s.setup.fillGaugePa)).size;
	const spans = { ...launcherSpans(shots), ...FIXED_SPAN };
	return names.map((name, j) => {
		const meta = PARAMETER_LABELS[name];
		const label = name === 'dragCoefficient' ? dragLabel(model.drag) : meta.label;
		const se = ls.standardErrors[j];
		const halfWidth = Number.isFinite(se) ? ls.tQuantile975 * se : Infinity;
		const span = spans[name] ?? Infinity;
		let reason: string | null = null;
		if (name === 'dragCoefficient' && !hasFlightData)
			reason = `${label} cannot be determined: no downrange speeds or impact heights at distance`;
		else if (name === 'elevationBias' && !hasImpacts) reason = 'elevation bias cannot be determined: no impact heights';
		else if (model.family === 'valve-flow' && (name === 'valveArea' || name === 'openingTime' || name === 'friction') && !hasSpeeds)
			reason = `${label} cannot be determined: no measured muzzle speeds`;
		else if ((name === 'pressureSlope' || name === 'energyOffset' || name === 'openingTime' || name === 'friction') && distinctPressures < 2)
			reason = `${label} cannot be told apart from the other terms: all shots were filled to the same pressure`;
		else if (stopped) reason = `${label} is not determined: the fit stopped before it settled (see its cause above)`;
		else if (!ls.identifiable[j])
			reason = `${label} cannot be determined: the data do not separate it from the other parameters (rank ${ls.rank} of ${names.length})`;
		else if (!(halfWidth <= UNDETERMINED_SPAN_FRACTION * span))
			reason =
				`${label} cannot be determined from these shots: its 95 % interval is ±${halfWidth.toPrecision(3)}${meta.unit ? ' ' + meta.unit : ''}` +
				(name === 'dragCoefficient'
					? ' (impacts or speeds this close to the muzzle carry almost no drag information; add downrange speeds or impacts farther out)'
					: name === 'elevationBias'
						? ''
						: ' (widen the range of fill pressures)');
		const identifiable = reason === null;
		return {
			name,
			label,
			unit: meta.unit,
			value: ls.params[j],
			standardError: identifiable ? se : Infinity,
			confidence95: identifiable ? ls.confidence95[j] : { lower: -Infinity, upper: Infinity },
			identifiable,
			reason,
			atBound: ls.atBound[j]
		};
	});
}
