//! The `check --json` document: what the loader and the survey found in one log.
//!
//! Times in s (`_s`), angles in rad (`_rad`); one object.
//!
//! ## Wire format `swingfit.check.v1`
//! `schema`, `source`, `samples`, `duration_s`, `rate_hz`, `jitter` (robust interval spread / median),
//! `gaps` (list of `{start_s, length_s}`), `angle_min_rad`, `angle_max_rad`, `rest_from_s`
//! (null when the log does not end at rest), `equilibrium_rad`, `period_s` (null when too few
//! crossings), `period_small_amplitude_s` (T0 with each half cycle corrected for its amplitude),
//! `crossings`, `half_cycles` (peaks found), `first_peak_rad`, `noise_rad`,
//! `encoder_step_rad` (null unless counts), `dropped_lines` (1-based file lines),
//! `free_segments` (list of `{start_s, end_s, samples, start, end}` with the causes in words),
//! `still` (list of `{from_s, to_s, deflection_rad, held}`), `forced_half_cycles` (list of
//! `[from_s, to_s]`), `no_free_segment` (the reason, or null), and `slips`
//! (`{count, doubled, repeated, phase_late, phase_early, bursts, period_s, judged_steps, first_s}`).

use serde::{Deserialize, Serialize};

use crate::data::slips::SlipKind;
use crate::data::survey::Survey;
use crate::data::{AngleLog, segment};

/// Schema tag of the check document (added in the second version of the other schemas; before
/// it the document had no tag and the same keys).
pub const CHECK_SCHEMA: &str = "swingfit.check.v1";

/// The `check --json` document: the survey and the motion segmentation of one log.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct CheckDoc {
    /// `swingfit.check.v1`.
    pub schema: String,
    /// The log as given.
    pub source: String,
    /// Samples read.
    pub samples: usize,
    /// Last minus first time [s].
    pub duration_s: f64,
    /// Median sample rate [Hz].
    #[serde(deserialize_with = "super::real")]
    pub rate_hz: f64,
    /// Robust spread of the sample intervals over their median [1].
    #[serde(deserialize_with = "super::real")]
    pub jitter: f64,
    /// Gaps in the time axis.
    pub gaps: Vec<GapDoc>,
    /// Smallest angle [rad].
    pub angle_min_rad: f64,
    /// Largest angle [rad].
    pub angle_max_rad: f64,
    /// Start of the final rest [s] (null when the log does not end at rest).
    pub rest_from_s: Option<f64>,
    /// Equilibrium from the survey [rad].
    pub equilibrium_rad: f64,
    /// Mean period [s] (null with too few crossings).
    pub period_s: Option<f64>,
    /// Small-amplitude period T0 [s], each half cycle corrected for its amplitude.
    pub period_small_amplitude_s: Option<f64>,
    /// Midline crossings found.
    pub crossings: usize,
    /// Half-cycle peaks found.
    pub half_cycles: usize,
    /// Deflection of the first peak [rad].
    pub first_peak_rad: Option<f64>,
    /// Noise floor [rad].
    #[serde(deserialize_with = "super::real")]
    pub noise_rad: f64,
    /// Encoder step [rad] (null unless the angle is in counts).
    pub encoder_step_rad: Option<f64>,
    /// File lines dropped by `--drop-bad-rows` (1-based).
    pub dropped_lines: Vec<u64>,
    /// Free segments with their causes in words.
    pub free_segments: Vec<SegmentDoc>,
    /// Still stretches (rest or holds).
    pub still: Vec<StillDoc>,
    /// Half cycles whose acceleration does not follow the restoring torque: [from s, to s].
    pub forced_half_cycles: Vec<[f64; 2]>,
    /// Why the log has no free segment (null when it has one).
    pub no_free_segment: Option<String>,
    /// Time-base slips.
    pub slips: SlipsDoc,
}

/// One free segment.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct SegmentDoc {
    /// Start [s].
    pub start_s: f64,
    /// End [s].
    pub end_s: f64,
    /// Samples in the segment.
    pub samples: usize,
    /// How it starts, in words.
    pub start: String,
    /// How it ends, in words.
    pub end: String,
}

/// One still stretch.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct StillDoc {
    /// Start [s].
    pub from_s: f64,
    /// End [s].
    pub to_s: f64,
    /// Deflection from the equilibrium [rad].
    pub deflection_rad: f64,
    /// Held away from the equilibrium (not at rest).
    pub held: bool,
}

/// The time-base slips of the log.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct SlipsDoc {
    /// Slips found.
    pub count: usize,
    /// Doubled steps made up by the next (a reading one interval late).
    pub doubled: usize,
    /// Zero steps made up by the next (a reading one interval early).
    pub repeated: usize,
    /// Doubled steps never made up (every later sample one interval late).
    pub phase_late: usize,
    /// Zero steps never made up (every later sample one interval early).
    pub phase_early: usize,
    /// Bursts of slips (slips within 5 intervals count as one).
    pub bursts: usize,
    /// Median time between bursts [s], with at least three bursts.
    pub period_s: Option<f64>,
    /// Steps that could be judged (fast, steady motion).
    pub judged_steps: usize,
    /// Times of the first 20 slips [s].
    pub first_s: Vec<f64>,
}

/// One gap in the time axis.
#[derive(Serialize, Deserialize, Debug, Clone, PartialEq)]
pub struct GapDoc {
    /// Where it starts [s].
    pub start_s: f64,
    /// Its length [s].
    pub length_s: f64,
}

/// The document of `log` with its survey `s` and segmentation `seg`.
pub fn check_doc(log: &AngleLog, s: &Survey, seg: &segment::Segmentation) -> CheckDoc {
    CheckDoc {
        schema: CHECK_SCHEMA.into(),
        source: log.source().to_string(),
        samples: s.samples,
        duration_s: s.duration_s,
        rate_hz: s.rate_hz,
        jitter: s.jitter,
        gaps: s.gaps.iter().map(|g| GapDoc { start_s: g.start_s, length_s: g.length_s }).collect(),
        angle_min_rad: s.angle_range.0,
        angle_max_rad: s.angle_range.1,
        rest_from_s: s.rest_from_s,
        equilibrium_rad: s.equilibrium_rad,
        period_s: s.period_s,
        period_small_amplitude_s: s.period_small_amplitude_s,
        crossings: s.crossings.len(),
        half_cycles: s.peaks.len(),
        first_peak_rad: s.peaks.first().map(|p| p.deflection),
        noise_rad: s.noise_rad,
        encoder_step_rad: s.encoder_step_rad,
        dropped_lines: log.dropped_lines().to_vec(),
        free_segments: seg
            .segments
            .iter()
            .map(|g| SegmentDoc {
                start_s: g.start_s,
                end_s: g.end_s,
                samples: g.end - g.start,
                start: segment::start_words(&g.start_cause, g.start_s),
                end: segment::end_words(&g.end_cause, g.end_s),
            })
            .collect(),
        still: seg
            .still
            .iter()
            .map(|x| StillDoc {
                from_s: x.from_s,
                to_s: x.to_s,
                deflection_rad: x.deflection_rad,
                held: x.held,
            })
            .collect(),
        forced_half_cycles: seg.forced.iter().map(|&(a, b)| [a, b]).collect(),
        no_free_segment: seg.refusal.clone(),
        slips: SlipsDoc {
            count: s.slips.count(),
            doubled: s.slips.count_of(SlipKind::Doubled),
            repeated: s.slips.count_of(SlipKind::Repeated),
            phase_late: s.slips.count_of(SlipKind::PhaseLate),
            phase_early: s.slips.count_of(SlipKind::PhaseEarly),
            bursts: s.slips.bursts,
            period_s: s.slips.period_s,
            judged_steps: s.slips.judged_steps,
            first_s: s.slips.slips.iter().take(20).map(|x| x.t).collect(),
        },
    }
}
