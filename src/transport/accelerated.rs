//! The accelerated walker: diffusion passages deep inside the medium, exact direct steps
//! everywhere else.
//!
//! * **Spheres** jump in the radial coordinate alone: between fixed node radii, with the
//!   exact first-passage laws of the radial diffusion on the model's own D(r), precomputed
//!   per model ([`super::radial_chain`]). No assumption about how D varies between nodes
//!   enters, so the passages can span most of a star.
//! * **Slabs** take local jumps: spheres of radius R₀ ≥ γ l_tr inside nearly uniform layers
//!   ([`super::jump_spheres`]).
//!
//! After a jump the photon finishes its interrupted flight (free paths are memoryless) with
//! exact direct stepping; near surfaces and sharp interfaces, and wherever diffusion is not
//! trusted, it takes only direct steps. Where no jump applies the walker draws exactly the
//! random numbers of the direct walker, so both give identical photons in media too thin
//! for jumps.

use nalgebra::Vector3;
use rand::{Rng, RngExt};

use super::absorption::Absorption;
use super::direct::{DepositSite, DirectWalker, JumpSites, Photon, Stop, WalkLimits};
use super::direction;
use super::jump_spheres::{JumpOutcome, LocalJumps, LocalSettings, PassageCapture};
use super::ledger::{Ledger, NoLedger, PathLedger};
use super::radial_chain::{ChainSettings, RadialChain};
use crate::medium::{Geometry, Medium, MediumError, Quantity};
use crate::tally::{AbsorbedAlongPath, Outcome, PhotonRecord};

/// Parameters of the accelerated walk, always valid: γ and ε are finite and positive. The
/// fields are private; [`Acceleration::new`] checks them, and so does deserialisation (a
/// shard, checkpoint or sweep file cannot smuggle in a bad value).
///
/// ```
/// use sojourn::transport::Acceleration;
/// assert!(Acceleration::new(0.0, 0.1, true).is_err());
/// assert!(Acceleration::new(10.0, f64::NAN, true).is_err());
/// assert_eq!(Acceleration::new(5.0, 0.2, false).unwrap().gamma(), 5.0);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(try_from = "AccelerationFields")]
pub struct Acceleration {
    gamma: f64,
    epsilon: f64,
    drift_correction: bool,
}

/// The serialised form of [`Acceleration`], checked by [`Acceleration::new`] on the way in.
#[derive(serde::Deserialize)]
#[serde(deny_unknown_fields)]
struct AccelerationFields {
    gamma: f64,
    epsilon: f64,
    drift_correction: bool,
}

impl TryFrom<AccelerationFields> for Acceleration {
    type Error = MediumError;

    fn try_from(fields: AccelerationFields) -> Result<Self, Self::Error> {
        Acceleration::new(fields.gamma, fields.epsilon, fields.drift_correction)
    }
}

impl Acceleration {
    /// Checked parameters: `gamma` (smallest jump, transport mean free paths) and
    /// `epsilon` (gradient tolerance, relative) finite and positive.
    ///
    /// # Errors
    /// [`MediumError::InvalidValue`] naming `gamma` or `epsilon`.
    pub fn new(gamma: f64, epsilon: f64, drift_correction: bool) -> Result<Self, MediumError> {
        for (name, value) in [("gamma", gamma), ("epsilon", epsilon)] {
            if !(value.is_finite() && value > 0.0) {
                return Err(MediumError::value(
                    name,
                    value,
                    Quantity::Dimensionless,
                    "a finite positive number",
                ));
            }
        }
        Ok(Self {
            gamma,
            epsilon,
            drift_correction,
        })
    }

    /// Smallest size of a jump, in transport mean free paths: a passage starts at least γ
    /// from where it can end (spheres), a local jump has R₀ ≥ γ l_tr (slabs).
    pub fn gamma(&self) -> f64 {
        self.gamma
    }

    /// Gradient tolerance: diffusion passages only where l_tr changes by at most ε over γ
    /// transport mean free paths (spheres); local jumps only where l_tr stays within a
    /// relative ε of its value at the centre (slabs).
    pub fn epsilon(&self) -> f64 {
        self.epsilon
    }

    /// Whether local jump exits are tilted along ∇D (first-order drift correction; slabs
    /// with smooth profiles only — radial passages are exact in D(r)).
    pub fn drift_correction(&self) -> bool {
        self.drift_correction
    }

    /// The same parameters with γ replaced (checked).
    ///
    /// # Errors
    /// As [`Acceleration::new`].
    pub fn with_gamma(self, gamma: f64) -> Result<Self, MediumError> {
        Self::new(gamma, self.epsilon, self.drift_correction)
    }

    /// The same parameters with ε replaced (checked).
    ///
    /// # Errors
    /// As [`Acceleration::new`].
    pub fn with_epsilon(self, epsilon: f64) -> Result<Self, MediumError> {
        Self::new(self.gamma, epsilon, self.drift_correction)
    }

    /// The same parameters with the drift correction switched on or off.
    pub fn with_drift_correction(self, drift_correction: bool) -> Self {
        Self {
            drift_correction,
            ..self
        }
    }
}

impl Default for Acceleration {
    /// Defaults chosen by measurement (README, "Accelerated walk").
    fn default() -> Self {
        Self {
            gamma: 10.0,
            epsilon: 0.1,
            drift_correction: true,
        }
    }
}

/// The jumps of one medium.
#[derive(Debug, Clone)]
enum Jumps {
    Radial(RadialChain),
    Local(LocalJumps),
}

/// The accelerated walker for one medium. Immutable and `Sync`.
#[derive(Debug, Clone)]
pub struct AcceleratedWalker {
    direct: DirectWalker,
    jumps: Jumps,
    boundaries_cm: Vec<f64>,
}

impl AcceleratedWalker {
    /// A walker for `medium` with per-photon `limits` and acceleration `settings`. For a
    /// sphere this builds the radial passage tables (about a millisecond per cell).
    pub fn new(medium: &Medium, limits: WalkLimits, settings: Acceleration) -> Self {
        let jumps = match medium.geometry() {
            Geometry::Sphere => Jumps::Radial(RadialChain::new(
                medium,
                ChainSettings {
                    gamma: settings.gamma,
                    epsilon: settings.epsilon,
                },
            )),
            Geometry::Slab => Jumps::Local(LocalJumps::new(
                medium,
                LocalSettings {
                    gamma: settings.gamma,
                    epsilon: settings.epsilon,
                    drift_correction: settings.drift_correction,
                },
            )),
        };
        Self {
            direct: DirectWalker::new(medium, limits),
            jumps,
            boundaries_cm: medium.boundaries_cm().to_vec(),
        }
    }

    /// Whether any jump can happen in this medium (else the walk is the direct one).
    pub fn has_jumps(&self) -> bool {
        match &self.jumps {
            Jumps::Radial(chain) => !chain.is_empty(),
            Jumps::Local(local) => !local.is_empty(),
        }
    }

    /// The same walker with absorption simulated as `absorption` (in the direct steps and
    /// in the jumps); weighted photons list their single deposits if `keep_deposits`.
    pub fn with_absorption(mut self, absorption: Absorption, keep_deposits: bool) -> Self {
        self.direct = self.direct.with_absorption(absorption, keep_deposits);
        self
    }

    /// Follows one photon from the source until it leaves, is absorbed or hits the step cap.
    /// For weighted walks, what the photon left in the medium is dropped: use
    /// [`AcceleratedWalker::walk_weighted_with_ledger`].
    pub fn walk<R: Rng + ?Sized>(&self, rng: &mut R) -> PhotonRecord {
        self.walk_booking(rng, &mut AbsorbedAlongPath::default(), &mut NoLedger)
    }

    /// [`Self::walk`], also booking the photon's time and interactions by cell in `ledger`
    /// (cleared first; made by [`PathLedger::for_medium`] for the same medium). Inside a
    /// jump the ledger gets the expected split of the jump's time over the cells
    /// ([`super::ledger`]). The photon and its record are the same as without the ledger.
    pub fn walk_with_ledger<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        ledger: &mut PathLedger,
    ) -> PhotonRecord {
        ledger.clear();
        self.walk_booking(rng, &mut AbsorbedAlongPath::default(), ledger)
    }

    /// [`Self::walk_with_ledger`] that also puts what the photon left in the medium
    /// (weighted walks; nothing for analog ones) into `absorbed`; both are cleared first.
    pub fn walk_weighted_with_ledger<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        absorbed: &mut AbsorbedAlongPath,
        ledger: &mut PathLedger,
    ) -> PhotonRecord {
        ledger.clear();
        self.walk_booking(rng, absorbed, ledger)
    }

    fn walk_booking<R: Rng + ?Sized, L: Ledger>(
        &self,
        rng: &mut R,
        absorbed: &mut AbsorbedAlongPath,
        ledger: &mut L,
    ) -> PhotonRecord {
        let (mut photon, reflected_at_entry) = self.direct.launch(rng);
        absorbed.clear();
        std::mem::swap(&mut photon.absorbed, absorbed);
        let record = if reflected_at_entry {
            photon.record(Outcome::Specular, 0.0, 0.0, 0.0)
        } else {
            match &self.jumps {
                Jumps::Radial(chain) => self.walk_with(
                    &Radial {
                        chain,
                        boundaries_cm: &self.boundaries_cm,
                    },
                    &mut photon,
                    rng,
                    ledger,
                ),
                Jumps::Local(local) => self.walk_with(local, &mut photon, rng, ledger),
            }
        };
        std::mem::swap(&mut photon.absorbed, absorbed);
        record
    }

    fn walk_with<J: Jumper, R: Rng + ?Sized, L: Ledger>(
        &self,
        jumper: &J,
        photon: &mut Photon,
        rng: &mut R,
        ledger: &mut L,
    ) -> PhotonRecord {
        let weighted = self.direct.weighted();
        let keep_deposits = self.direct.keep_deposits();
        let max_steps = self.direct.limits().max_steps;
        let (mut jumps, mut jump_time_s) = (0.0, 0.0);
        // An isotropic source is a jump site without an incoming direction.
        let mut site: Option<Option<Vector3<f64>>> = (self.direct.source_is_isotropic()
            && jumper.jump_here(&photon.position, photon.layer))
        .then_some(None);
        let outcome = loop {
            if let Some(incoming) = site.take() {
                if photon.steps >= max_steps {
                    break Outcome::Censored;
                }
                let start = DepositSite {
                    time_s: photon.time_s,
                    scatterings: photon.scatterings,
                    layer: photon.layer,
                    depth_cm: photon.position.z,
                };
                match jumper.jump(photon, incoming.as_ref(), weighted, rng, ledger) {
                    Some(done) => {
                        photon.steps += 1;
                        jumps += 1.0;
                        jump_time_s += done.elapsed_s;
                        if done.absorbed {
                            break Outcome::Absorbed;
                        }
                        if let Some(capture) = done.capture {
                            // Weighted: the passage's survival e^(−h) applied to the
                            // weight, the loss left where the passage started, at its mean
                            // time given absorption during the passage.
                            let site = DepositSite {
                                time_s: start.time_s + capture.mean_fraction * done.elapsed_s,
                                scatterings: start.scatterings
                                    + capture.mean_fraction
                                        * (photon.scatterings - start.scatterings),
                                ..start
                            };
                            if !photon.capture(capture.survival, site, keep_deposits, rng) {
                                break Outcome::Absorbed;
                            }
                        }
                    }
                    None if incoming.is_some() => self.direct.scatter(photon, rng),
                    None => {}
                }
            }
            match self.direct.follow(photon, rng, jumper, ledger) {
                Stop::Ended(outcome) => break outcome,
                Stop::JumpSite => site = Some(Some(photon.direction)),
            }
        };
        let flights = photon.steps as f64 - jumps;
        photon.record(outcome, jumps, flights, jump_time_s)
    }
}

/// A kind of jump: where it may start and how it moves the photon.
trait Jumper: JumpSites {
    /// One jump from the photon's position (a scattering site reached with direction
    /// `incoming`, or an isotropic source), or `None` if none applies there after all.
    /// `weighted`: absorption during the jump as a survival factor
    /// ([`JumpOutcome::capture`]) instead of an analog end. Books the jump's expected
    /// residence by cell in `ledger`.
    fn jump<R: Rng + ?Sized, L: Ledger>(
        &self,
        photon: &mut Photon,
        incoming: Option<&Vector3<f64>>,
        weighted: bool,
        rng: &mut R,
        ledger: &mut L,
    ) -> Option<JumpOutcome>;
}

impl JumpSites for LocalJumps {
    #[inline]
    fn jump_here(&self, position: &Vector3<f64>, layer: usize) -> bool {
        self.jump_radius(position, layer).is_some()
    }
}

impl Jumper for LocalJumps {
    fn jump<R: Rng + ?Sized, L: Ledger>(
        &self,
        photon: &mut Photon,
        incoming: Option<&Vector3<f64>>,
        weighted: bool,
        rng: &mut R,
        ledger: &mut L,
    ) -> Option<JumpOutcome> {
        LocalJumps::jump(self, photon, incoming, weighted, rng, ledger)
    }
}

/// Radial passages with what placing the photon needs.
struct Radial<'a> {
    chain: &'a RadialChain,
    boundaries_cm: &'a [f64],
}

impl JumpSites for Radial<'_> {
    #[inline]
    fn jump_here(&self, position: &Vector3<f64>, layer: usize) -> bool {
        self.chain.may_start(position, layer)
    }
}

impl Jumper for Radial<'_> {
    fn jump<R: Rng + ?Sized, L: Ledger>(
        &self,
        photon: &mut Photon,
        incoming: Option<&Vector3<f64>>,
        weighted: bool,
        rng: &mut R,
        ledger: &mut L,
    ) -> Option<JumpOutcome> {
        let transition = self
            .chain
            .transition(&photon.position, photon.layer, incoming, rng)?;
        let passage = transition.passage;
        let capture = (weighted && passage.absorption_hazard > 0.0)
            .then(|| PassageCapture::of_hazard(passage.absorption_hazard));
        if !weighted && passage.absorption_hazard > 0.0 {
            let hazard = passage.absorption_hazard;
            if rng.random::<f64>() >= (-hazard).exp() {
                // Absorbed: when, given that it happened during the passage (the hazard
                // taken as uniform in time); the photon ends where the passage started.
                let fraction =
                    super::jump_spheres::fraction_before_absorption(rng.random(), hazard);
                photon.time_s += fraction * passage.time_s;
                photon.scatterings += fraction * passage.scatterings;
                transition.book(fraction * passage.time_s, ledger);
                ledger.book(photon.layer, 0.0, 1.0);
                return Some(JumpOutcome {
                    elapsed_s: fraction * passage.time_s,
                    absorbed: true,
                    capture: None,
                });
            }
        }
        photon.time_s += passage.time_s;
        photon.scatterings += passage.scatterings;
        transition.book(passage.time_s, ledger);
        // A uniformly random point of the exit sphere, crossing it outward or inward.
        let normal = direction::isotropic(rng);
        let radius = transition.exit_radius_cm;
        photon.position = radius * normal;
        photon.layer = self
            .boundaries_cm
            .partition_point(|&b| b <= radius)
            .min(self.boundaries_cm.len() - 1);
        let axis = if passage.outward { normal } else { -normal };
        let cosine = transition.exit_law.sample_cosine(rng);
        photon.direction = direction::scatter(&axis, cosine, rng);
        Some(JumpOutcome {
            elapsed_s: passage.time_s,
            absorbed: false,
            capture,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::Acceleration;

    #[test]
    fn deserialised_parameters_are_checked_like_constructed_ones() {
        let default = Acceleration::default();
        let text = serde_json::to_string(&default).unwrap();
        assert_eq!(
            text,
            r#"{"gamma":10.0,"epsilon":0.1,"drift_correction":true}"#
        );
        assert_eq!(
            serde_json::from_str::<Acceleration>(&text).unwrap(),
            default
        );
        for (bad, field) in [
            (
                r#"{"gamma":-1.0,"epsilon":0.1,"drift_correction":true}"#,
                "gamma",
            ),
            (
                r#"{"gamma":10.0,"epsilon":0.0,"drift_correction":true}"#,
                "epsilon",
            ),
        ] {
            let error = serde_json::from_str::<Acceleration>(bad).unwrap_err();
            assert!(error.to_string().contains(field), "{error}");
        }
    }
}
