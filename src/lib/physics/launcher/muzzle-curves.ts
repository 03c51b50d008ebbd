// Valve-flow muzzle speeds for many shots at once (physics.md §1: an ODE per shot). The speed of
// a valve-flow shot depends on the shot only through its fill pressure once the rig, projectile,
// barometric pressure and air temperature are fixed — and a session's shots share those. So a fit
// over a large session solves the ODE at CURVE_NODES fill pressures spanning the session's shots
// and interpolates the kinetic energy ½mv² (smooth in p above the threshold, where v itself
// behaves like √(p − p_threshold)) at each shot, instead of solving one ODE per shot: the cost of
// a fit no longer grows with the number of shots.
//
// Why our own code: interpolation in Chebyshev–Lobatto points by the barycentric formula
// (J.-P. Berrut & L.N. Trefethen, "Barycentric Lagrange interpolation", SIAM Review 46 (2004)
// 501–517, eq. 5.3 with the weights of §5, from memory) is a dozen lines, and the packages at hand
// (simple-statistics, d3) do no polynomial interpolation.
//
// Groups with fewer than CURVE_MIN_SHOTS shots are solved shot by shot: the curve pays only when
// it replaces more ODEs than it costs.

import { calibratedMuzzleSpeed, temperatureKOf, type CalibrationParameters, type LauncherModel, type ShotSetup } from './model';

/** Chebyshev–Lobatto nodes per curve; the interpolation error is checked in muzzle-curves.spec.ts. */
export const CURVE_NODES = 25;
/** A group needs more shots than this before a curve replaces its per-shot ODEs. */
export const CURVE_MIN_SHOTS = 40;
/** Fraction of the span a pressure may lie beyond the curve's ends and still be read from it. */
const EDGE_MARGIN = 1e-3;
/** Curves kept per group (the LM revisits recent parameter vectors for its Jacobian). */
const CURVES_KEPT = 12;

interface Curve {
	nodes: number[];
	energies: number[];
	weights: number[];
}

function groupKey(setup: ShotSetup): string {
	const { rig, projectile, session } = setup;
	return [rig.reservoirM3, rig.deadM3, rig.boreDiameterM, rig.travelM, rig.polytropicIndex ?? '', projectile.massKg, session.ambientPa, temperatureKOf(session)].join('|');
}

/** Barycentric weights of the Chebyshev–Lobatto points: (−1)^j, halved at both ends. */
function lobattoWeights(n: number): number[] {
	return Array.from({ length: n }, (_, j) => (j % 2 === 0 ? 1 : -1) * (j === 0 || j === n - 1 ? 0.5 : 1));
}

function interpolate(c: Curve, x: number): number {
	let num = 0;
	let den = 0;
	for (let j = 0; j < c.nodes.length; j++) {
		const d = x - c.nodes[j];
		if (d === 0) return c.energies[j];
		const t = c.weights[j] / d;
		num += t * c.energies[j];
		den += t;
	}
	return num / den;
}

export class MuzzleCurves {
	private readonly groups = new Map<string, { setup: ShotSetup; min: number; max: number; curves: Map<string, Curve | null> }>();

	constructor(
		private readonly model: LauncherModel,
		setups: readonly ShotSetup[]
	) {
		if (model.family !== 'valve-flow') return;
		const counts = new Map<string, ShotSetup[]>();
		for (const s of setups) {
			const key = groupKey(s);
			counts.set(key, [...(counts.get(key) ?? []), s]);
		}
		for (const [key, members] of counts) {
			if (members.length <= CURVE_MIN_SHOTS) continue;
			const fills = members.map((m) => m.fillGaugePa);
			this.groups.set(key, { setup: members[0], min: Math.min(...fills), max: Math.max(...fills), curves: new Map() });
		}
	}

	/** The speed from the group's curve, or undefined when the shot is solved on its own. */
	speed(setup: ShotSetup, p: CalibrationParameters, fillGaugePa: number): number | null | undefined {
		const group = this.groups.get(groupKey(setup));
		// A sliver beyond the ends (the forward difference in p at the highest shot) stays on the curve.
		if (!group) return undefined;
		const margin = EDGE_MARGIN * (group.max - group.min);
		if (fillGaugePa < group.min - margin || fillGaugePa > group.max + margin) return undefined;
		const key = `${p.valveAreaM2}|${p.openingTimeS}|${p.frictionN}`;
		let curve = group.curves.get(key);
		if (curve === undefined) {
			curve = this.build(group.setup, p, group.min, group.max);
			group.curves.set(key, curve);
			if (group.curves.size > CURVES_KEPT) group.curves.delete(group.curves.keys().next().value!);
		}
		if (curve === null) return undefined;
		const energy = interpolate(curve, fillGaugePa);
		return energy > 0 ? Math.sqrt(energy) : null;
	}

	/** Null when a node cannot be solved (below the threshold, say): the group's shots are then solved one by one. */
	private build(setup: ShotSetup, p: CalibrationParameters, min: number, max: number): Curve | null {
		const n = CURVE_NODES;
		const nodes = Array.from({ length: n }, (_, j) => 0.5 * (min + max) + 0.5 * (max - min) * Math.cos((Math.PI * j) / (n - 1)));
		const energies: number[] = [];
		for (const fill of nodes) {
			const r = calibratedMuzzleSpeed(this.model, p, setup, fill);
			if (!r.ok) return null;
			energies.push(r.speedMps * r.speedMps);
		}
		return { nodes, energies, weights: lobattoWeights(n) };
	}
}
