//! The one safety text of swingfit, printed on every coefficient sheet, after `swingfit --help`
//! and quoted in the README, so that all three always say the same thing.
//!
//! It follows usual practice for swinging heavy articles and release mechanisms and defers to
//! local codes, the site's safety rules and qualified engineers; a test checks that the README
//! quotes it word for word.

/// The safety text (one paragraph, plain text, no markup).
pub const SAFETY: &str = "A swinging test article stores energy and can injure. Guard the swing \
arc and mark a keep-out zone, with no one inside it and clear of pinch points at the frame, stops \
and release mechanism. The pivot, its bearings, the hanger, the fixture and every fastener must be \
rated for the article's weight and the loads of the largest release angle; check them before each \
run. Release the article by a controlled mechanism operated from outside the zone, kept locked \
until the zone is clear. Never touch, catch or stop a moving article by hand: wait until it has \
come to rest, or stop it with a means designed for that, before approaching. The coefficients \
describe this article on this rig under the stated assumptions and are not a certification. Local \
codes and regulations, the site's safety rules and the judgement of qualified engineers take \
precedence over this text and over any result of swingfit.";
