//! Starter cases for `lamella new`: the bundled, commented cases of `cases/`, by short name.

/// One starter case.
#[derive(Clone, Copy, Debug)]
pub struct Template {
    /// Name given to `lamella new`.
    pub name: &'static str,
    /// One line saying what it sets up.
    pub summary: &'static str,
    /// The RON text, with comments.
    pub text: &'static str,
}

/// Every template, in the order `lamella new --help` lists them.
pub const TEMPLATES: &[Template] = &[
    Template {
        name: "channel",
        summary: "start-up Poiseuille flow in a periodic channel between two walls",
        text: include_str!("../../../cases/poiseuille.ron"),
    },
    Template {
        name: "two-layer-channel",
        summary: "a thick viscous layer under a thin runny one, driven along a channel",
        text: include_str!("../../../cases/two-layer-channel.ron"),
    },
    Template {
        name: "seeded-channel",
        summary: "the two-layer channel with a sine wave on the interface (instability)",
        text: include_str!("../../../cases/two-layer-channel-seeded.ron"),
    },
    Template {
        name: "couette",
        summary: "start-up Couette flow under a sliding top wall",
        text: include_str!("../../../cases/couette.ron"),
    },
    Template {
        name: "cavity",
        summary: "lid-driven cavity at Re = 100",
        text: include_str!("../../../cases/cavity-re100.ron"),
    },
    Template {
        name: "two-phase-cavity",
        summary: "lid-driven cavity over a viscous layer, with a viscous drop (mixing)",
        text: include_str!("../../../cases/two-phase-cavity.ron"),
    },
    Template {
        name: "shear-thinning-channel",
        summary: "a power-law (shear-thinning) liquid driven along a channel",
        text: include_str!("../../../cases/shear-thinning-channel.ron"),
    },
    Template {
        name: "yield-stress-channel",
        summary: "a Bingham plastic (yield stress) in a channel: a plug on the centre line",
        text: include_str!("../../../cases/yield-stress-channel.ron"),
    },
    Template {
        name: "taylor-green",
        summary: "decaying Taylor–Green vortex in a periodic square",
        text: include_str!("../../../cases/taylor-green.ron"),
    },
];

/// The template called `name`.
pub fn template(name: &str) -> Option<&'static Template> {
    TEMPLATES.iter().find(|t| t.name == name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_template_is_a_valid_case() {
        for t in TEMPLATES {
            if let Err(err) = crate::parse_str(t.text, t.name) {
                panic!("template {} is invalid:\n{err}", t.name);
            }
        }
        assert!(template("cavity").is_some());
        assert!(template("no-such").is_none());
    }
}
