//! Initial particles of a case: a cell-centred lattice of fluid, rows of wall particles
//! outside the walled sides, phases from the regions and the interface markers.

use std::f64::consts::TAU;

use lamella_cells::Vector;

use crate::schema::{Axis, Case, InitialVelocity, Region, Side};

/// Marks a lattice site that no region covers.
const EMPTY: u16 = u16::MAX;

/// Particles at time zero, fluid first (in lattice order, x fastest), then walls.
#[derive(Clone, Debug, PartialEq)]
pub struct Generated<V> {
    /// Position (m).
    pub position: Vec<V>,
    /// Initial velocity (m/s); for wall particles, their wall velocity.
    pub velocity: Vec<V>,
    /// Phase index. A wall particle takes the phase of the fluid site nearest to it across the
    /// wall, so that it can use that phase's reference density.
    pub phase: Vec<u16>,
    /// True for wall (dummy) particles.
    pub is_wall: Vec<bool>,
    /// Prescribed wall velocity (m/s); zero for fluid.
    pub wall_velocity: Vec<V>,
    /// Fluid particles with a lattice neighbour (including diagonals) of another phase: the
    /// initial interface, for the growth analysis.
    pub interface_marker: Vec<bool>,
    /// Lattice sites inside the domain that no region covers (left without a particle).
    pub uncovered_sites: usize,
}

impl<V> Generated<V> {
    /// Total number of particles.
    pub fn len(&self) -> usize {
        self.is_wall.len()
    }

    /// True when there are no particles.
    pub fn is_empty(&self) -> bool {
        self.is_wall.is_empty()
    }

    /// Number of wall particles.
    pub fn wall_count(&self) -> usize {
        self.is_wall.iter().filter(|&&w| w).count()
    }

    /// Number of fluid particles of each of `phases` phases.
    pub fn fluid_count_per_phase(&self, phases: usize) -> Vec<usize> {
        let mut counts = vec![0; phases];
        for (&phase, &wall) in self.phase.iter().zip(&self.is_wall) {
            if !wall && let Some(count) = counts.get_mut(phase as usize) {
                *count += 1;
            }
        }
        counts
    }
}

/// The lattice geometry shared by the fluid and wall passes.
struct Lattice {
    dim: usize,
    dx: f64,
    lower: [f64; 3],
    counts: [usize; 3],
    periodic: [bool; 3],
}

impl Lattice {
    /// Coordinate of lattice index `i` (may be negative or past the end, for walls).
    fn coordinate(&self, axis: usize, i: i64) -> f64 {
        self.lower[axis] + (i as f64 + 0.5) * self.dx
    }

    fn site_count(&self) -> usize {
        self.counts[..self.dim].iter().product()
    }

    fn unflatten(&self, mut flat: usize) -> [i64; 3] {
        let mut index = [0i64; 3];
        for (axis, slot) in index.iter_mut().enumerate().take(self.dim) {
            *slot = (flat % self.counts[axis]) as i64;
            flat /= self.counts[axis];
        }
        index
    }

    /// Flat index of a lattice site, wrapping periodic axes; None outside the domain.
    fn flatten(&self, index: [i64; 3]) -> Option<usize> {
        let mut flat = 0usize;
        for axis in (0..self.dim).rev() {
            let n = self.counts[axis] as i64;
            let mut i = index[axis];
            if self.periodic[axis] {
                i = i.rem_euclid(n);
            } else if i < 0 || i >= n {
                return None;
            }
            flat = flat * self.counts[axis] + i as usize;
        }
        Some(flat)
    }
}

/// Builds the initial particles of a validated case.
///
/// Panics if `V::DIM` differs from `case.dimension` (callers pick `V` from the dimension).
pub fn generate<V: Vector>(case: &Case) -> Generated<V> {
    assert_eq!(
        V::DIM,
        case.dimension as usize,
        "generate: vector dimension must match the case dimension"
    );
    let dim = V::DIM;
    let counts = case.lattice_counts();
    let mut lattice = Lattice {
        dim,
        dx: case.particles.spacing,
        lower: [0.0; 3],
        counts: [1; 3],
        periodic: [false; 3],
    };
    for (axis, &count) in counts.iter().enumerate() {
        lattice.lower[axis] = case.domain.lower[axis];
        lattice.counts[axis] = count;
    }
    for axis in &case.domain.periodic {
        if axis.index() < dim {
            lattice.periodic[axis.index()] = true;
        }
    }
    let grid = phase_grid(case, &lattice);
    let seed = Seed::of(case);
    let mut out = Generated {
        position: Vec::new(),
        velocity: Vec::new(),
        phase: Vec::new(),
        is_wall: Vec::new(),
        wall_velocity: Vec::new(),
        interface_marker: Vec::new(),
        uncovered_sites: grid.iter().filter(|&&p| p == EMPTY).count(),
    };
    for (flat, &phase) in grid.iter().enumerate() {
        if phase == EMPTY {
            continue;
        }
        let index = lattice.unflatten(flat);
        let site = site_position(&lattice, index);
        let mut p = seed.as_ref().map_or(site, |seed| seed.displace(site));
        if lattice.periodic[0] {
            let length = lattice.counts[0] as f64 * lattice.dx;
            p[0] = lattice.lower[0] + (p[0] - lattice.lower[0]).rem_euclid(length);
        }
        out.position.push(V::from_fn(|a| p[a]));
        let v = initial_velocity(case, &p);
        out.velocity.push(V::from_fn(|a| v[a]));
        out.phase.push(phase);
        out.is_wall.push(false);
        out.wall_velocity.push(V::ZERO);
        out.interface_marker
            .push(touches_other_phase(&lattice, &grid, index, phase));
    }
    add_walls(case, &lattice, &grid, &mut out);
    out
}

fn site_position(lattice: &Lattice, index: [i64; 3]) -> [f64; 3] {
    let mut p = [0.0; 3];
    for (axis, slot) in p.iter_mut().enumerate().take(lattice.dim) {
        *slot = lattice.coordinate(axis, index[axis]);
    }
    p
}

/// Phase of every lattice site (x fastest), EMPTY where no region covers it.
fn phase_grid(case: &Case, lattice: &Lattice) -> Vec<u16> {
    let regions: Vec<(&Region, u16)> = case
        .regions
        .iter()
        .filter_map(|r| case.phase_index(r.phase()).map(|i| (r, i as u16)))
        .collect();
    (0..lattice.site_count())
        .map(|flat| {
            let p = site_position(lattice, lattice.unflatten(flat));
            let mut phase = EMPTY;
            for (region, index) in &regions {
                let inside = match region {
                    Region::Fill { .. } => true,
                    Region::Layer { bottom, top, .. } => p[1] >= *bottom && p[1] < *top,
                    Region::Box { lower, upper, .. } => {
                        (0..lattice.dim).all(|a| p[a] >= lower[a] && p[a] < upper[a])
                    }
                    Region::Circle { centre, radius, .. } => {
                        let r2: f64 = (0..lattice.dim).map(|a| (p[a] - centre[a]).powi(2)).sum();
                        r2 <= radius * radius
                    }
                };
                if inside {
                    phase = *index;
                }
            }
            phase
        })
        .collect()
}

/// The smooth seed of an interface wave: the particles are carried for unit time along the
/// streamlines of ψ = (A/k) cos(k(x − x0)) f(y), i.e. by the divergence-free field
/// w = (∂ψ/∂y, −∂ψ/∂x) = ((A/k) cos(kξ) f'(y), A sin(kξ) f(y)). The flow of a divergence-free
/// field preserves area exactly (Liouville's theorem; Arnold, Mathematical Methods of Classical
/// Mechanics, §16), so the particles stay evenly spread, and a boundary at f = 1, f' = 0 moves
/// to y0 + A sin(kξ) up to terms of order A² f''. f is 1 on and between the layer boundaries and
/// falls to 0 at a wall as (1 − cos(π s))/2, s the distance from the wall over the wall-to-
/// boundary distance, so f' = 0 at both ends and the wall rows stay where they are.
#[derive(Clone, Debug, PartialEq)]
pub struct Seed {
    amplitude: f64,
    wavenumber: f64,
    x0: f64,
    /// Lowest and highest layer boundary (m).
    first: f64,
    last: f64,
    /// Walls along y at (lower, upper), or `None` when y is periodic (then f = 1 everywhere).
    walls: Option<(f64, f64)>,
}

/// Runge–Kutta steps of the seed's unit-time flow: the map is smooth and its speed at most
/// about A k, so 16 classical RK4 steps leave an error far below round-off of a spacing.
const SEED_STEPS: usize = 16;

impl Seed {
    /// The seed of a case's `interface_perturbation`; `None` without one (or without a layer
    /// boundary inside the domain).
    pub fn of(case: &Case) -> Option<Self> {
        let p = case.interface_perturbation.as_ref()?;
        let boundaries = case.interior_layer_boundaries();
        let walls =
            (!case.is_periodic(Axis::Y)).then(|| (case.domain.lower[1], case.domain.upper[1]));
        Some(Seed {
            amplitude: p.amplitude,
            wavenumber: TAU / p.wavelength,
            x0: case.domain.lower[0],
            first: *boundaries.first()?,
            last: *boundaries.last()?,
            walls,
        })
    }

    /// f(y) and f'(y).
    fn shape(&self, y: f64) -> (f64, f64) {
        use std::f64::consts::PI;
        let Some((lo, hi)) = self.walls else {
            return (1.0, 0.0);
        };
        let ramp = |distance: f64, width: f64| {
            let s = (distance / width).clamp(0.0, 1.0);
            (
                0.5 * (1.0 - (PI * s).cos()),
                0.5 * PI / width * (PI * s).sin(),
            )
        };
        if y < self.first {
            ramp(y - lo, self.first - lo)
        } else if y > self.last {
            let (f, slope) = ramp(hi - y, hi - self.last);
            (f, -slope)
        } else {
            (1.0, 0.0)
        }
    }

    /// The field w at (x, y).
    fn velocity(&self, x: f64, y: f64) -> [f64; 2] {
        let (f, df) = self.shape(y);
        let phase = self.wavenumber * (x - self.x0);
        [
            self.amplitude / self.wavenumber * phase.cos() * df,
            self.amplitude * phase.sin() * f,
        ]
    }

    /// The point `p` (m; z is left as it is) carried along w for unit time (classical
    /// fourth-order Runge–Kutta). Along a periodic x the result may need wrapping.
    pub fn displace(&self, mut p: [f64; 3]) -> [f64; 3] {
        let h = 1.0 / SEED_STEPS as f64;
        for _ in 0..SEED_STEPS {
            let (x, y) = (p[0], p[1]);
            let k1 = self.velocity(x, y);
            let k2 = self.velocity(x + 0.5 * h * k1[0], y + 0.5 * h * k1[1]);
            let k3 = self.velocity(x + 0.5 * h * k2[0], y + 0.5 * h * k2[1]);
            let k4 = self.velocity(x + h * k3[0], y + h * k3[1]);
            p[0] += h / 6.0 * (k1[0] + 2.0 * k2[0] + 2.0 * k3[0] + k4[0]);
            p[1] += h / 6.0 * (k1[1] + 2.0 * k2[1] + 2.0 * k3[1] + k4[1]);
        }
        p
    }
}

/// True when a lattice neighbour (faces, edges and corners) holds fluid of another phase.
fn touches_other_phase(lattice: &Lattice, grid: &[u16], index: [i64; 3], phase: u16) -> bool {
    let offsets = 3usize.pow(lattice.dim as u32);
    (0..offsets).any(|code| {
        let mut neighbour = index;
        let mut c = code;
        for slot in neighbour.iter_mut().take(lattice.dim) {
            *slot += (c % 3) as i64 - 1;
            c /= 3;
        }
        neighbour != index
            && lattice
                .flatten(neighbour)
                .is_some_and(|flat| grid[flat] != EMPTY && grid[flat] != phase)
    })
}

/// The initial fluid velocity at `p`. `SteadyChannel` is zero here: the runner's set-up fills
/// it from the analytical profile, which lives with the other reference solutions.
fn initial_velocity(case: &Case, p: &[f64; 3]) -> [f64; 3] {
    match &case.initial_velocity {
        InitialVelocity::Rest | InitialVelocity::SteadyChannel => [0.0; 3],
        InitialVelocity::Uniform { velocity } => {
            let mut v = [0.0; 3];
            for (slot, x) in v.iter_mut().zip(velocity) {
                *slot = *x;
            }
            v
        }
        InitialVelocity::TaylorGreen { amplitude } => {
            let k = TAU / case.extent(0);
            let x = k * (p[0] - case.domain.lower[0]);
            let y = k * (p[1] - case.domain.lower[1]);
            let z_factor = if case.dimension == 3 {
                (k * (p[2] - case.domain.lower[2])).cos()
            } else {
                1.0
            };
            [
                amplitude * x.sin() * y.cos() * z_factor,
                -amplitude * x.cos() * y.sin() * z_factor,
                0.0,
            ]
        }
    }
}

/// The low and high side across each axis (x, y, z).
const SIDES_ACROSS: [(Side, Side); 3] = [
    (Side::Left, Side::Right),
    (Side::Bottom, Side::Top),
    (Side::Back, Side::Front),
];

/// Rows of wall particles outside each walled side. Along the other axes a wall spans the
/// domain, and also the wall rows of every higher axis, so corners (and edges in 3D) are
/// filled exactly once and belong to the wall of the lowest axis (for a cavity: the side walls,
/// so a moving lid covers only the cavity width). A moving wall's particles within one kernel
/// support of a resting wall are at rest ([`spacings_to_resting_wall`]).
fn add_walls<V: Vector>(case: &Case, lattice: &Lattice, grid: &[u16], out: &mut Generated<V>) {
    let layers_on = |side: Side| -> i64 {
        case.walls
            .iter()
            .find(|w| w.side == side)
            .map_or(0, |w| i64::from(w.layers))
    };
    let resting: Vec<Side> = case
        .walls
        .iter()
        .filter(|w| {
            w.velocity
                .as_ref()
                .is_none_or(|v| v.iter().all(|&c| c == 0.0))
        })
        .map(|w| w.side)
        .collect();
    for wall in &case.walls {
        let axis = wall.side.axis().index();
        if axis >= lattice.dim || case.is_periodic(wall.side.axis()) {
            continue;
        }
        let mut ranges = [(0i64, 1i64); 3];
        for b in 0..lattice.dim {
            let n = lattice.counts[b] as i64;
            ranges[b] = if b == axis {
                let layers = i64::from(wall.layers);
                if wall.side.is_high() {
                    (n, n + layers)
                } else {
                    (-layers, 0)
                }
            } else if b > axis && !case.is_periodic(axis_of(b)) {
                let (low, high) = SIDES_ACROSS[b];
                (-layers_on(low), n + layers_on(high))
            } else {
                (0, n)
            };
        }
        let speed: [f64; 3] = {
            let mut v = [0.0; 3];
            if let Some(velocity) = &wall.velocity {
                for (slot, x) in v.iter_mut().zip(velocity) {
                    *slot = *x;
                }
            }
            v
        };
        let moving = V::from_fn(|a| speed[a]);
        let corner_reach = case.support_radius() / lattice.dx;
        for k in ranges[2].0..ranges[2].1 {
            for j in ranges[1].0..ranges[1].1 {
                for i in ranges[0].0..ranges[0].1 {
                    let index = [i, j, k];
                    let p = site_position(lattice, index);
                    let at_corner = moving != V::ZERO
                        && spacings_to_resting_wall(&resting, lattice, index, axis) < corner_reach;
                    let wall_velocity = if at_corner { V::ZERO } else { moving };
                    out.position.push(V::from_fn(|a| p[a]));
                    out.velocity.push(wall_velocity);
                    out.phase.push(nearest_fluid_phase(lattice, grid, index));
                    out.is_wall.push(true);
                    out.wall_velocity.push(wall_velocity);
                    out.interface_marker.push(false);
                }
            }
        }
    }
}

/// Distance, in spacings, from wall site `index` of the wall across `axis` to the first
/// particle row of the nearest wall across another axis whose side is in `resting` (infinite
/// when none is).
///
/// A moving wall's particles closer than one kernel support to a resting wall are made at
/// rest, so at a lid corner the lid's speed drops to zero over one support. Without it the
/// lid's no-slip velocity at the corner, extrapolated as 2 U_w − v_f from a nearly still corner
/// particle, is close to 2 U_w; its viscous pull on that particle along the lid is stronger than
/// the pressure that holds it off the side wall, and drags it into the wall (measured on a
/// 0.1 Pa·s glaze over water; a linear fall of the speed over the support did not hold it:
/// DEVELOPERS.md). The same idea as the regularised driven cavity, whose lid speed falls to
/// zero at the corners (Shen 1991, J. Comput. Phys. 95; recalled from memory).
fn spacings_to_resting_wall(
    resting: &[Side],
    lattice: &Lattice,
    index: [i64; 3],
    axis: usize,
) -> f64 {
    (0..lattice.dim)
        .filter(|&b| b != axis && !lattice.periodic[b])
        .flat_map(|b| {
            let (low, high) = SIDES_ACROSS[b];
            let n = lattice.counts[b] as i64;
            // The first row of the low wall across b has index −1, of the high wall index n.
            [
                resting.contains(&low).then_some((index[b] + 1) as f64),
                resting.contains(&high).then_some((n - index[b]) as f64),
            ]
        })
        .flatten()
        .fold(f64::INFINITY, f64::min)
}

fn axis_of(index: usize) -> Axis {
    [Axis::X, Axis::Y, Axis::Z][index]
}

/// Phase of the domain site nearest to a (wall) lattice index; phase 0 if that site is empty.
fn nearest_fluid_phase(lattice: &Lattice, grid: &[u16], index: [i64; 3]) -> u16 {
    let mut clamped = index;
    for (axis, slot) in clamped.iter_mut().enumerate().take(lattice.dim) {
        *slot = (*slot).clamp(0, lattice.counts[axis] as i64 - 1);
    }
    match lattice.flatten(clamped).map(|flat| grid[flat]) {
        Some(phase) if phase != EMPTY => phase,
        _ => 0,
    }
}
