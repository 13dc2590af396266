"""Bodies that move or sit among wakes: a waterplane on a course, riding the sea plus wakes.

Knows nothing of presets or files. A :class:`~oceanfield.surface.bodies.Body` riding a
sea with vessels feels the sea's waves and the wakes (``surface.wake``) of every vessel
but itself: its waterplane is sampled as in ``bodies`` (the same grid of cell midpoints,
the same least-squares plane), at the displaced sea's points, with the wake's height
there added to first order (``surface.wake.combine``). A body on a course is placed at
its course's position and heading at each instant (the forcing samples of a damped
response too), so its motion is still a function of its time alone; a fixed body is a
course that stays put. Outside the wake's region there is no wake (`Wake.surface_at`), as in
the maps. Its rotation is R = Rz(ψ(t)) · Ry(−pitch) · Rx(roll), as in
``bodies`` with the heading of the instant.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from .bodies import Body, BodyMotion, _rotation, _waterplane, body_motion
from .modes import WaveModes
from .probes import surface_at

__all__ = ["ride", "standing_course", "headings_deg"]


def standing_course(body: Body, t0: float, t1: float):
    """A :class:`~oceanfield.surface.wake.Course` that holds ``body`` at its place and
    heading from ``t0`` to ``t1`` (seconds, t1 > t0)."""
    from .wake import Course

    return Course(np.array([t0, t1]), np.full(2, float(body.x)), np.full(2, float(body.y)),
                  np.full(2, float(body.heading)))


def ride(modes: WaveModes, body: Body, times: ArrayLike, *, spacing: float, course, wake=None,
         exclude: int | None = None, step: float | None = None) -> BodyMotion:
    """Heave, pitch and roll of ``body`` following ``course`` on the sea plus ``wake``.

    Parameters
    ----------
    modes : WaveModes
        The sea (``Ocean.modes()``).
    body : Body
        Its waterplane and responses; its own x, y and heading are replaced by the course's.
    times : array_like, shape (T,)
    spacing : float
        Target distance between waterplane samples, metres (as ``body_motion``).
    course : Course
        Where the body is (``position``, ``heading_at``) at each instant.
    wake : Wake, optional
        The vessels' wakes the body rides on; ``exclude`` leaves out vessel number
        ``exclude``'s own (the body's, when it is one of the wake's vessels).
    step : float, optional
        Forcing step of the damped responses (as ``body_motion``).

    Returns
    -------
    BodyMotion
        ``position`` (T, 3) follows the course; ``rotation`` turns with its heading.
    """
    from .wake import combine

    xi, zeta, cell = _waterplane(body, spacing)
    # as in bodies._wave_plane: waves shorter than two cells average out over the waterplane
    resolved = modes.longer_than(2.0 * cell) if cell > spacing else modes

    def plane(instants):
        instants = np.asarray(instants, dtype=np.float64)
        x, y = course.position(instants)
        psi = course.heading_at(instants)
        c, s = np.cos(psi)[:, None], np.sin(psi)[:, None]
        px = x[:, None] + xi[None, :] * c - zeta[None, :] * s
        py = y[:, None] + xi[None, :] * s + zeta[None, :] * c
        points = surface_at(resolved, px, py, instants[:, None])
        if wake is not None:
            added = wake.surface_at(points.rest[..., 0], points.rest[..., 1],
                                np.broadcast_to(instants[:, None], px.shape), exclude=exclude)
            points = combine(points, added)
        eta = points.position[..., 2]
        heave = eta.mean(axis=1)
        slope_along = eta @ xi / float(xi @ xi)  # the symmetric grid's decoupled normal equations
        slope_across = eta @ zeta / float(zeta @ zeta)
        pitch = np.arctan(slope_along)
        roll = np.arctan(slope_across * np.cos(pitch))
        return heave, pitch, roll, xi.size, float(points.residual.max(initial=0.0))

    times = np.atleast_1d(np.asarray(times, dtype=np.float64))
    motion = body_motion(modes, body, times, spacing=spacing, step=step, plane=plane)
    x, y = course.position(times)
    heading = course.heading_at(times)
    level = _rotation(0.0, motion.pitch, motion.roll)
    turn = np.zeros((times.size, 3, 3))
    turn[:, 0, 0] = turn[:, 1, 1] = np.cos(heading)
    turn[:, 1, 0] = np.sin(heading)
    turn[:, 0, 1] = -np.sin(heading)
    turn[:, 2, 2] = 1.0
    position = np.stack([x, y, motion.heave], axis=-1)
    return BodyMotion(motion.heave, motion.pitch, motion.roll, position, turn @ level, motion.samples,
                      motion.worst_residual)


def headings_deg(course, times: ArrayLike) -> np.ndarray:
    """The course's heading at ``times`` in degrees counter-clockwise from +x, in (−180, 180]."""
    return np.degrees(np.angle(np.exp(1j * course.heading_at(np.asarray(times, dtype=np.float64)))))

