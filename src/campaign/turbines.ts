/**
 * The turbines of a campaign: one accessor for each way the rest of wakeplane asks for one. `campaign.turbines` is
 * the list (the single `turbine` key first); `campaign.turbine` stays as the first of them for code that knows of
 * one turbine only.
 */
import type { Campaign, PlaneSpec, Turbine } from './types.ts';

/** The turbine with this id, or undefined. */
export function turbineById(c: Pick<Campaign, 'turbines'>, id: string): Turbine | undefined {
  return c.turbines.find((t) => t.id === id);
}

/** The turbine whose frame a plane belongs to; for a site-frame plane the first turbine (its size scales x_D). */
export function turbineOfPlane(c: Pick<Campaign, 'turbines'>, plane: Pick<PlaneSpec, 'turbineIndex'>): Turbine {
  return c.turbines[Math.max(0, plane.turbineIndex ?? 0)];
}

/**
 * The turbine whose series gives the windows their turbine state (segment windows, yaw-offset condition bins, the
 * steered and baseline windows of the power gain): windows.turbine when given, else the first turbine with a series
 * that is not the power question's reference (power.reference is taken to be unaffected by the yaw offsets, so its
 * yaw cannot say whether a window was steered), else the first turbine with a series, else the first turbine.
 */
export function stateTurbine(c: Pick<Campaign, 'turbines' | 'windows'> & { power?: { reference?: string } }): Turbine {
  const id = c.windows.kind === 'segments' ? c.windows.turbine : undefined;
  const ref = c.power?.reference;
  return (id !== undefined ? turbineById(c, id) : undefined)
    ?? c.turbines.find((t) => t.series && t.id !== ref) ?? c.turbines.find((t) => t.series) ?? c.turbines[0];
}

/** A plane's frame origin in the site frame, metres (its turbine's tower base unless given). */
export function planeOrigin(c: Pick<Campaign, 'turbines'>, plane: Pick<PlaneSpec, 'turbineIndex' | 'origin'>): [number, number, number] {
  return plane.origin ? [...plane.origin] : [...turbineOfPlane(c, plane).position];
}
