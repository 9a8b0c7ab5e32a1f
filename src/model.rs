//! The compound-pendulum model: what is integrated and what is fitted.
//!
//! Equation of motion about the pivot, with θ the measured angle and θeq the angle the article
//! hangs at when it rests:
//!
//! J θ'' = −m g d sin(θ − θeq) − c θ' − τc sgn θ' − cq θ'|θ'|
//!
//! Free decay can only identify the coefficients *per unit inertia*, so the model works in that
//! view ([`Physics`]): ωn² = m g d / J, viscous b1 = c/J [1/s], Coulomb b0 = τc/J [rad/s²],
//! quadratic b2 = cq/J [1/rad], the pre-sliding stiffness σ = k/J [1/s²] of the Coulomb
//! friction, and the Stribeck excess bs = (τs − τc)/J [rad/s²] with its characteristic velocity
//! vs [rad/s] (docs/friction.md). The physical view (J, c, τc, cq) needs m, d and g and lives in
//! [`crate::physical`]; the one conversion between the two views is there.
//!
//! Each damping mechanism is a [`Term`]. A model is a [`DampingSet`] of terms; everything a term
//! contributes to the equations (its acceleration, its partial derivatives, its name and units) is
//! written once, in the `match` arms of [`Term`]'s methods, so a new mechanism is one new variant.

use std::fmt;

/// One damping mechanism of the pendulum.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Term {
    /// Viscous (linear in velocity): b1·ω.
    Viscous,
    /// Coulomb (dry) friction: b0·sgn ω, with true stick–slip.
    Coulomb,
    /// Quadratic (velocity squared, aerodynamic): b2·ω|ω|.
    Quadratic,
    /// Pre-sliding stiffness σ of the Coulomb friction (elastoplastic spring–slider, Dahl's
    /// i = 0 limit): the Coulomb force builds up as σ·(angle moved since the slider last
    /// stopped) until it reaches b0. Only meaningful together with [`Term::Coulomb`]; it
    /// replaces the Coulomb term's b0·dir by that state-dependent force (see docs/friction.md).
    /// Its [`Term::accel`] is zero: the force needs the angle and the friction state, so the
    /// integrators evaluate it (see `integrate::Rhs`).
    Presliding,
    /// Stribeck excess bs of the Coulomb friction: the friction level rises from b0 at speed to
    /// b0 + bs at rest, as b0 + bs·exp(−(ω/vs)²) (docs/friction.md). Only meaningful together
    /// with [`Term::Coulomb`] and [`Term::StribeckVelocity`] (the parser adds both).
    Stribeck,
    /// Characteristic (Stribeck) velocity vs [rad/s] of [`Term::Stribeck`]: the second
    /// coefficient of the same mechanism, kept in a slot of its own so that every parameter
    /// vector stays one coefficient per slot. It is not scaled by the inertia.
    StribeckVelocity,
}

/// Number of coefficient slots (length of [`Term::ALL`] and of [`Physics::damping`]).
pub const N_TERMS: usize = 6;

impl Term {
    /// Every term, in the canonical order used for parameter vectors and reports.
    pub const ALL: [Term; N_TERMS] = [
        Term::Viscous,
        Term::Coulomb,
        Term::Quadratic,
        Term::Presliding,
        Term::Stribeck,
        Term::StribeckVelocity,
    ];

    /// Index of the term in [`Term::ALL`].
    pub fn index(self) -> usize {
        match self {
            Term::Viscous => 0,
            Term::Coulomb => 1,
            Term::Quadratic => 2,
            Term::Presliding => 3,
            Term::Stribeck => 4,
            Term::StribeckVelocity => 5,
        }
    }

    /// The name used on the command line and as JSON key.
    pub fn name(self) -> &'static str {
        match self {
            Term::Viscous => "viscous",
            Term::Coulomb => "coulomb",
            Term::Quadratic => "quadratic",
            Term::Presliding => "presliding",
            Term::Stribeck => "stribeck",
            Term::StribeckVelocity => "stribeck_velocity",
        }
    }

    /// Whether this slot is a mechanism of its own (every term but
    /// [`Term::StribeckVelocity`], which is the second coefficient of [`Term::Stribeck`]).
    pub fn is_mechanism(self) -> bool {
        self != Term::StribeckVelocity
    }

    /// Whether the physical coefficient is this one times the inertia J (all but the Stribeck
    /// velocity, which is a speed in both views).
    pub fn scales_with_inertia(self) -> bool {
        self != Term::StribeckVelocity
    }

    /// Parse a name as given on the command line (case-insensitive).
    pub fn parse(s: &str) -> Option<Term> {
        match s.trim().to_ascii_lowercase().as_str() {
            "viscous" | "v" => Some(Term::Viscous),
            "coulomb" | "dry" | "c" => Some(Term::Coulomb),
            "quadratic" | "q" => Some(Term::Quadratic),
            "presliding" | "pre-sliding" | "elastoplastic" | "p" => Some(Term::Presliding),
            "stribeck" | "s" => Some(Term::Stribeck),
            "stribeck_velocity" => Some(Term::StribeckVelocity),
            _ => None,
        }
    }

    /// Unit of the per-unit-inertia coefficient.
    pub fn normalized_unit(self) -> &'static str {
        match self {
            Term::Viscous => "1/s",
            Term::Coulomb => "rad/s^2",
            Term::Quadratic => "1/rad",
            Term::Presliding => "1/s^2",
            Term::Stribeck => "rad/s^2",
            Term::StribeckVelocity => "rad/s",
        }
    }

    /// Unit of the physical coefficient (coefficient times J).
    pub fn physical_unit(self) -> &'static str {
        match self {
            Term::Viscous => "N*m*s/rad",
            Term::Coulomb => "N*m",
            Term::Quadratic => "N*m*s^2/rad^2",
            Term::Presliding => "N*m/rad",
            Term::Stribeck => "N*m",
            Term::StribeckVelocity => "rad/s",
        }
    }

    /// Symbol used in prose and tables.
    pub fn symbol(self) -> &'static str {
        match self {
            Term::Viscous => "b1",
            Term::Coulomb => "b0",
            Term::Quadratic => "b2",
            Term::Presliding => "sigma",
            Term::Stribeck => "bs",
            Term::StribeckVelocity => "vs",
        }
    }

    /// Deceleration this term contributes, per unit inertia, given every coefficient `c`
    /// (indexed by [`Term::index`]), angular velocity `omega` and direction of motion `dir` (+1
    /// or −1; the sign Coulomb friction opposes, held fixed between velocity reversals so that
    /// friction never chatters). The equation of motion subtracts it:
    /// θ'' = −ωn² sin(θ−θeq) − Σ accel. The Stribeck excess needs its velocity, hence all of `c`.
    #[inline]
    pub fn accel(self, c: &[f64; N_TERMS], omega: f64, dir: f64) -> f64 {
        let coef = c[self.index()];
        match self {
            Term::Viscous => coef * omega,
            Term::Coulomb => coef * dir,
            Term::Quadratic => coef * omega * omega.abs(),
            Term::Presliding | Term::StribeckVelocity => 0.0,
            Term::Stribeck => coef * dir * stribeck_shape(omega, c[Term::StribeckVelocity.index()]),
        }
    }

    /// ∂accel/∂ω.
    #[inline]
    pub fn daccel_domega(self, c: &[f64; N_TERMS], omega: f64, dir: f64) -> f64 {
        let coef = c[self.index()];
        match self {
            Term::Viscous => coef,
            Term::Coulomb | Term::Presliding | Term::StribeckVelocity => 0.0,
            Term::Quadratic => 2.0 * coef * omega.abs(),
            Term::Stribeck => {
                let vs = c[Term::StribeckVelocity.index()];
                if vs > 0.0 {
                    -2.0 * coef * dir * omega / (vs * vs) * stribeck_shape(omega, vs)
                } else {
                    0.0
                }
            }
        }
    }

    /// ∂accel/∂(this term's coefficient).
    #[inline]
    pub fn daccel_dcoef(self, c: &[f64; N_TERMS], omega: f64, dir: f64) -> f64 {
        match self {
            Term::Viscous => omega,
            Term::Coulomb => dir,
            Term::Quadratic => omega * omega.abs(),
            Term::Presliding => 0.0,
            Term::Stribeck => dir * stribeck_shape(omega, c[Term::StribeckVelocity.index()]),
            Term::StribeckVelocity => {
                let vs = c[Term::StribeckVelocity.index()];
                if vs > 0.0 {
                    let r = omega / vs;
                    c[Term::Stribeck.index()] * dir * 2.0 * r * r / vs * stribeck_shape(omega, vs)
                } else {
                    0.0
                }
            }
        }
    }
}

/// The Stribeck curve's shape exp(−(ω/vs)²): 1 at rest, falling to 0 well above vs
/// (Armstrong-Hélouvry 1991's exponential form with exponent 2; docs/friction.md). 0 when vs ≤ 0.
#[inline]
pub fn stribeck_shape(omega: f64, vs: f64) -> f64 {
    if vs > 0.0 {
        let r = omega / vs;
        (-r * r).exp()
    } else {
        0.0
    }
}

impl fmt::Display for Term {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A non-empty or empty set of damping terms, iterated in canonical order.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, PartialOrd, Ord)]
pub struct DampingSet(u8);

impl DampingSet {
    /// The set with no terms (undamped pendulum).
    pub const EMPTY: DampingSet = DampingSet(0);
    /// The three rate-dependent terms (viscous, Coulomb, quadratic), without pre-sliding.
    pub const FULL: DampingSet = DampingSet(0b111);

    /// Build from a list of terms.
    pub fn from_terms(terms: &[Term]) -> DampingSet {
        DampingSet(terms.iter().fold(0, |m, t| m | (1 << t.index())))
    }

    /// Parse a comma-separated list such as `viscous,coulomb`; `stribeck` brings its velocity
    /// slot with it.
    pub fn parse(s: &str) -> Result<DampingSet, String> {
        let mut set = DampingSet::EMPTY;
        for part in s.split(',').filter(|p| !p.trim().is_empty()) {
            match Term::parse(part).filter(|t| t.is_mechanism()) {
                Some(Term::Stribeck) => {
                    set = set.with(Term::Stribeck).with(Term::StribeckVelocity);
                }
                Some(t) => set = set.with(t),
                None => {
                    return Err(format!(
                        "unknown damping term \"{}\"; expected viscous, coulomb, quadratic, presliding or stribeck",
                        part.trim()
                    ));
                }
            }
        }
        if set.is_empty() {
            return Err(
                "empty damping set; expected one or more of viscous, coulomb, quadratic".into()
            );
        }
        set.check()?;
        Ok(set)
    }

    /// Why the set is no model, if it is none: pre-sliding and Stribeck are refinements of the
    /// Coulomb friction (they need coulomb), and the two together (the LuGre combination) are
    /// not modelled.
    pub fn check(self) -> Result<(), String> {
        if self.contains(Term::Presliding) && !self.contains(Term::Coulomb) {
            return Err("presliding is the stiffness of the Coulomb friction; \
                        it needs coulomb in the same set"
                .into());
        }
        if self.contains(Term::Stribeck) != self.contains(Term::StribeckVelocity) {
            return Err("stribeck and its velocity go together".into());
        }
        if self.contains(Term::Stribeck) && !self.contains(Term::Coulomb) {
            return Err("stribeck is the rise of the Coulomb friction towards rest; \
                        it needs coulomb in the same set"
                .into());
        }
        if self.contains(Term::Stribeck) && self.contains(Term::Presliding) {
            return Err("presliding and stribeck together (the LuGre combination) are not \
                        modelled; fit one of them"
                .into());
        }
        Ok(())
    }

    /// This set plus `t`.
    pub fn with(self, t: Term) -> DampingSet {
        DampingSet(self.0 | (1 << t.index()))
    }

    /// This set without `t`.
    pub fn without(self, t: Term) -> DampingSet {
        DampingSet(self.0 & !(1 << t.index()))
    }

    /// Whether `t` is in the set.
    pub fn contains(self, t: Term) -> bool {
        self.0 & (1 << t.index()) != 0
    }

    /// Whether the set is empty.
    pub fn is_empty(self) -> bool {
        self.0 == 0
    }

    /// Number of terms.
    pub fn len(self) -> usize {
        self.0.count_ones() as usize
    }

    /// Whether `self` is a subset of `other`.
    pub fn is_subset(self, other: DampingSet) -> bool {
        self.0 & !other.0 == 0
    }

    /// The terms in canonical order.
    pub fn iter(self) -> impl Iterator<Item = Term> {
        Term::ALL.into_iter().filter(move |t| self.contains(*t))
    }

    /// The seven non-empty subsets of the three rate-dependent terms, smallest first.
    pub fn all_nonempty() -> Vec<DampingSet> {
        let mut v: Vec<DampingSet> = (1u8..8).map(DampingSet).collect();
        v.sort_by_key(|s| (s.len(), s.0));
        v
    }

    /// Every valid model: the seven subsets of [`DampingSet::all_nonempty`] and, for each of
    /// them that holds Coulomb friction, the same set with its pre-sliding stiffness (eleven
    /// sets), smallest first. A pre-sliding term without Coulomb friction is no model.
    pub fn all_with_presliding() -> Vec<DampingSet> {
        let mut v = DampingSet::all_nonempty();
        let extra: Vec<DampingSet> = v
            .iter()
            .filter(|s| s.contains(Term::Coulomb))
            .map(|s| s.with(Term::Presliding))
            .collect();
        v.extend(extra);
        v.sort_by_key(|s| (s.len(), s.0));
        v
    }

    /// The whole friction family: [`DampingSet::all_with_presliding`] and, for each of the
    /// seven subsets that holds Coulomb friction, the same set with the Stribeck excess (fifteen
    /// sets), smallest first.
    pub fn all_friction_family() -> Vec<DampingSet> {
        let mut v = DampingSet::all_with_presliding();
        let extra: Vec<DampingSet> = DampingSet::all_nonempty()
            .into_iter()
            .filter(|s| s.contains(Term::Coulomb))
            .map(|s| s.with(Term::Stribeck).with(Term::StribeckVelocity))
            .collect();
        v.extend(extra);
        v.sort_by_key(|s| (s.len(), s.0));
        v
    }

    /// Whether the set is a model the integrators accept (see [`DampingSet::check`]).
    pub fn is_valid(self) -> bool {
        self.check().is_ok()
    }

    /// Number of mechanisms (the Stribeck velocity slot not counted).
    pub fn n_mechanisms(self) -> usize {
        self.iter().filter(|t| t.is_mechanism()).count()
    }

    /// Names of the mechanisms in canonical order, e.g. `["viscous", "coulomb", "stribeck"]`
    /// (the Stribeck velocity slot goes with `stribeck` and is not named).
    pub fn names(self) -> Vec<&'static str> {
        self.iter().filter(|t| t.is_mechanism()).map(Term::name).collect()
    }
}

impl fmt::Display for DampingSet {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.is_empty() {
            return f.write_str("none");
        }
        f.write_str(&self.names().join("+"))
    }
}

/// Physics of one article, per unit inertia: what free decay identifies.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Physics {
    /// Small-amplitude natural frequency ωn = √(m g d / J) [rad/s].
    pub omega_n: f64,
    /// Damping coefficients indexed by [`Term::index`]: b1 [1/s], b0 [rad/s²], b2 [1/rad],
    /// pre-sliding stiffness σ [1/s²] (0 = none: the plain Coulomb slider).
    pub damping: [f64; N_TERMS],
    /// Static (breakaway) Coulomb level per unit inertia [rad/s²], ≥ the kinetic b0. `None`
    /// means equal to the kinetic level.
    pub breakaway: Option<f64>,
}

impl Physics {
    /// Undamped pendulum with natural frequency `omega_n`.
    pub fn undamped(omega_n: f64) -> Physics {
        Physics { omega_n, damping: [0.0; N_TERMS], breakaway: None }
    }

    /// Coefficient of `t`.
    pub fn coef(&self, t: Term) -> f64 {
        self.damping[t.index()]
    }

    /// Set the coefficient of `t`, returning the modified value.
    pub fn with_coef(mut self, t: Term, v: f64) -> Physics {
        self.damping[t.index()] = v;
        self
    }

    /// The terms with non-zero coefficients.
    pub fn active_terms(&self) -> DampingSet {
        DampingSet::from_terms(
            &Term::ALL.into_iter().filter(|t| self.coef(*t) != 0.0).collect::<Vec<_>>(),
        )
    }

    /// Pre-sliding stiffness σ when it acts (σ > 0 with Coulomb friction b0 > 0), else `None`.
    pub fn presliding(&self) -> Option<f64> {
        let (s, b0) = (self.coef(Term::Presliding), self.coef(Term::Coulomb));
        (s > 0.0 && b0 > 0.0).then_some(s)
    }

    /// Stribeck excess bs and velocity vs when the curve acts (both > 0), else `None`.
    pub fn stribeck(&self) -> Option<(f64, f64)> {
        let (bs, vs) = (self.coef(Term::Stribeck), self.coef(Term::StribeckVelocity));
        (bs > 0.0 && vs > 0.0).then_some((bs, vs))
    }

    /// Static friction level per unit inertia used by the stick test: the friction at zero
    /// speed, b0 + bs (the Stribeck curve at rest), or the breakaway level when higher.
    pub fn static_level(&self) -> f64 {
        let at_rest = self.coef(Term::Coulomb) + self.stribeck().map_or(0.0, |(bs, _)| bs);
        self.breakaway.unwrap_or(0.0).max(at_rest)
    }

    /// Angular acceleration θ'' for angle `theta`, velocity `omega`, direction `dir` (±1)
    /// and equilibrium `equilibrium`, with the plain Coulomb slider (the pre-sliding force
    /// needs the friction state and is evaluated by the integrators).
    #[inline]
    pub fn accel(&self, theta: f64, omega: f64, dir: f64, equilibrium: f64) -> f64 {
        let mut a = -self.omega_n * self.omega_n * (theta - equilibrium).sin();
        for t in Term::ALL {
            if self.damping[t.index()] != 0.0 {
                a -= t.accel(&self.damping, omega, dir);
            }
        }
        a
    }

    /// Check that every value is finite and non-negative (ωn > 0); names the field at fault.
    pub fn validate(&self) -> Result<(), String> {
        if !(self.omega_n.is_finite() && self.omega_n > 0.0) {
            return Err(format!("omega_n must be a finite number > 0, found {}", self.omega_n));
        }
        for t in Term::ALL {
            let c = self.coef(t);
            if !(c.is_finite() && c >= 0.0) {
                return Err(format!("{} must be a finite number >= 0, found {}", t.name(), c));
            }
        }
        if self.coef(Term::Stribeck) > 0.0 && self.coef(Term::StribeckVelocity) <= 0.0 {
            return Err("stribeck needs a stribeck_velocity > 0".into());
        }
        if self.presliding().is_some() && self.stribeck().is_some() {
            return Err("presliding and stribeck together (the LuGre combination) are not \
                        modelled; give one of them"
                .into());
        }
        if self.presliding().is_some()
            && self.breakaway.is_some_and(|b| b > self.coef(Term::Coulomb))
        {
            return Err("breakaway above the Coulomb level cannot be combined with presliding \
                        (the spring-slider has one friction level)"
                .into());
        }
        if let Some(b) = self.breakaway
            && !(b.is_finite() && b >= self.coef(Term::Coulomb))
        {
            return Err(format!(
                "breakaway must be finite and >= coulomb ({}), found {}",
                self.coef(Term::Coulomb),
                b
            ));
        }
        Ok(())
    }
}

/// The per-run state: where the article rests and how it was released.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Release {
    /// Equilibrium angle θeq [rad], in the log's angle frame.
    pub equilibrium: f64,
    /// Angle at the first sample time [rad], in the log's frame.
    pub angle: f64,
    /// Angular velocity at the first sample time [rad/s].
    pub velocity: f64,
}

/// Number of per-run parameters in [`Release`] (equilibrium, angle, velocity).
pub const RELEASE_PARAMS: usize = 3;

/// Complete elliptic integral of the first kind K(m), parameter m = k², 0 ≤ m < 1, by the AGM.
pub fn ellip_k(m: f64) -> f64 {
    let (mut a, mut b) = (1.0f64, (1.0 - m).sqrt());
    for _ in 0..60 {
        let (an, bn) = (0.5 * (a + b), (a * b).sqrt());
        a = an;
        b = bn;
        if (a - b).abs() <= 1e-16 * a {
            break;
        }
    }
    std::f64::consts::FRAC_PI_2 / a
}

/// Ratio T/T0 of the undamped pendulum's period at amplitude `a` [rad] to its small-amplitude
/// period: (2/π)·K(sin²(a/2)) (Abramowitz & Stegun 17.3.1 [memory]; docs/checks.md §2). The
/// large-amplitude to the small-amplitude period for amplitude `a` [rad].
pub fn period_ratio(a: f64) -> f64 {
    let s = (0.5 * a.abs().min(3.1)).sin();
    ellip_k(s * s) / std::f64::consts::FRAC_PI_2
}
