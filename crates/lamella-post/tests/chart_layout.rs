//! Every kind of chart Lamella draws, rendered with realistic data, a long title and extreme
//! value ranges: no text may be cut off at the image edge, no two texts may overlap (an axis
//! title over its tick labels, crowded tick labels), and the legend may cover no data point.
//! The layouts checked are the ones the renderers record while drawing
//! (`lamella_post::plot::Layout`), not a copy of the layout logic.

use lamella_post::plot::{
    Chart, Layout, MapFrame, Role, Series, Style, field_map_layout, scatter_map_layout,
};
use lamella_post::stability::{MapPoint, c64, growth_curve_chart, map_chart};

const LONG_TITLE: &str = "Two-layer channel, m = 20, n = 1, Re = 1, k h = π, 30 particles \
    across, seeded interface wave of 8 µm: measured against predicted growth";

fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|k| a + (b - a) * k as f64 / (n - 1) as f64)
        .collect()
}

fn series(label: &str, x: Vec<f64>, y: Vec<f64>, style: Style) -> Series {
    Series {
        label: label.into(),
        x,
        y,
        style,
    }
}

/// Fails with every problem of `layout`, and checks that both axes got at least two tick
/// labels (one tick alone gives no scale) and every title was drawn.
fn check(name: &str, layout: &Layout) {
    let problems = layout.problems();
    assert!(problems.is_empty(), "{name}:\n  {}", problems.join("\n  "));
    for role in [Role::XTick, Role::YTick] {
        let ticks = layout.texts_of(role).count();
        assert!(ticks >= 2, "{name}: {ticks} {role:?} label(s) drawn");
    }
    for role in [Role::XTitle, Role::YTitle, Role::Title] {
        assert!(
            layout.texts_of(role).next().is_some(),
            "{name}: no {role:?} drawn"
        );
    }
}

fn check_chart(name: &str, chart: &Chart, size: (u32, u32)) -> Layout {
    let (png, layout) = chart
        .render(size.0, size.1)
        .unwrap_or_else(|e| panic!("{name}: {e}"));
    assert!(png.starts_with(b"\x89PNG"), "{name}");
    assert_eq!(layout.size, size, "{name}");
    check(name, &layout);
    assert!(layout.legend.is_some(), "{name}: no legend");
    layout
}

/// The velocity profile across a two-layer channel (as `lamella profile` draws it).
fn profile(title: &str, scale: f64) -> Chart {
    let y = linspace(0.0, 1e-3, 30);
    let u: Vec<f64> = y
        .iter()
        .map(|y| scale * 4.0 * y * (1e-3 - y) / 1e-6)
        .collect();
    let fine = linspace(0.0, 1e-3, 201);
    let exact: Vec<f64> = fine
        .iter()
        .map(|y| scale * 4.0 * y * (1e-3 - y) / 1e-6)
        .collect();
    Chart {
        title: title.into(),
        x_label: "velocity u (m/s)".into(),
        y_label: "y (m)".into(),
        log_x: false,
        log_y: false,
        series: vec![
            series("SPH (binned)", u, y, Style::Points),
            series(
                "analytical: two-layer Poiseuille (harmonic pair viscosity)",
                exact,
                fine,
                Style::Line,
            ),
            series(
                "interface",
                vec![0.0, scale],
                vec![5e-4, 5e-4],
                Style::Dashed,
            ),
        ],
    }
}

/// Interface amplitude against time on a log axis, with fit and theory (as `lamella growth` and
/// `lamella stability --run` draw it).
fn growth(title: &str, a0: f64, rate: f64, end: f64, theory: bool) -> Chart {
    let t = linspace(0.0, end, 60);
    let amp: Vec<f64> = t
        .iter()
        .enumerate()
        .map(|(k, t)| a0 * (rate * t).exp() * (1.0 + 0.02 * ((k * 7) % 5) as f64))
        .collect();
    let mut s = vec![
        series("mode amplitude", t.clone(), amp, Style::Points),
        series(
            "noise floor",
            t.clone(),
            vec![0.1 * a0; t.len()],
            Style::Line,
        ),
        series(
            "fit, 4.897e0 ± 1.4e-1 1/s",
            t.clone(),
            t.iter().map(|t| a0 * (rate * t).exp()).collect(),
            Style::Dashed,
        ),
    ];
    if theory {
        s.push(series(
            "theory, 4.532e0 1/s",
            t.clone(),
            t.iter().map(|t| a0 * (0.93 * rate * t).exp()).collect(),
            Style::Line,
        ));
    }
    Chart {
        title: title.into(),
        x_label: "time (s)".into(),
        y_label: "interface mode amplitude (m)".into(),
        log_x: false,
        log_y: true,
        series: s,
    }
}

fn convergence(title: &str, dx: &[f64], l2: &[f64]) -> Chart {
    let order = (l2[0] / l2[l2.len() - 1]).ln() / (dx[0] / dx[dx.len() - 1]).ln();
    Chart {
        title: title.into(),
        x_label: "particle spacing (m)".into(),
        y_label: "relative L2 error of the profile (1)".into(),
        log_x: true,
        log_y: true,
        series: vec![
            series("runs", dx.to_vec(), l2.to_vec(), Style::Points),
            series(
                &format!("fit, slope {order:.2}"),
                dx.to_vec(),
                dx.iter().map(|d| l2[0] * (d / dx[0]).powf(order)).collect(),
                Style::Dashed,
            ),
        ],
    }
}

fn mixing(title: &str, end: f64) -> Chart {
    let t = linspace(0.0, end, 80);
    let line = |label: &str, f: &dyn Fn(f64) -> f64| {
        series(
            label,
            t.clone(),
            t.iter().map(|&t| f(t / end)).collect(),
            Style::Line,
        )
    };
    Chart {
        title: title.into(),
        x_label: "time (s)".into(),
        y_label: "measure (1)".into(),
        log_x: false,
        log_y: false,
        series: vec![
            line("intensity of segregation (Danckwerts)", &|s| 1.0 - 0.9 * s),
            line("Lacey index", &|s| 0.089 + 0.8 * s * s),
            line("mixing entropy index", &|s| 0.2 + 0.7 * s.sqrt()),
        ],
    }
}

fn mean_ftle(title: &str, scale: f64) -> Chart {
    let t = linspace(0.0, 2.0, 50);
    Chart {
        title: title.into(),
        x_label: "time (s)".into(),
        y_label: "mean FTLE (1/s)".into(),
        log_x: false,
        log_y: false,
        series: vec![series(
            "mean FTLE since t = 0",
            t.clone(),
            t.iter().map(|t| scale * (1.0 - (-t).exp())).collect(),
            Style::Line,
        )],
    }
}

fn map_points(ms: &[f64], ns: &[f64], rate: impl Fn(f64, f64) -> f64) -> Vec<MapPoint> {
    let mut points = Vec::new();
    for &n in ns {
        for &m in ms {
            points.push(MapPoint {
                m,
                n,
                speed: c64::new(0.5, 0.0),
                growth_rate: rate(m, n),
            });
        }
    }
    points
}

fn log_spaced(a: f64, b: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|k| a * (b / a).powf(k as f64 / (n - 1) as f64))
        .collect()
}

#[test]
fn line_charts_keep_every_text_inside_and_apart_and_the_legend_off_the_data() {
    let charts = [
        (
            "profile",
            profile(
                "Two-layer channel at t = 0.500 s: relative L2 error 2.92e-3",
                1.2e-3,
            ),
            (900, 640),
        ),
        (
            "profile, long title",
            profile(LONG_TITLE, 1.2e-3),
            (900, 640),
        ),
        ("profile, fast", profile("fast", 3.4e5), (900, 640)),
        ("profile, slow", profile("slow", 7.0e-11), (900, 640)),
        (
            "growth",
            growth(
                "Interface wave: growth rate 4.897e0 1/s",
                8e-6,
                4.9,
                0.1,
                false,
            ),
            (900, 600),
        ),
        (
            "growth vs theory",
            growth(LONG_TITLE, 8e-6, 4.9, 0.1, true),
            (800, 560),
        ),
        (
            "growth over twelve decades",
            growth("decades", 1e-12, 270.0, 0.1, true),
            (800, 560),
        ),
        (
            "decay",
            growth("decaying wave", 5e-3, -40.0, 0.3, true),
            (800, 560),
        ),
        (
            "convergence",
            convergence(
                "Two-layer channel: observed order 2.14",
                &[4e-5, 3e-5, 2e-5],
                &[9.1e-3, 5.2e-3, 2.3e-3],
            ),
            (800, 600),
        ),
        (
            "convergence, long title and wide range",
            convergence(LONG_TITLE, &[1e-2, 1e-4, 1e-6], &[3e-1, 3e-7, 3e-13]),
            (800, 600),
        ),
        (
            "mixing",
            mixing("Rayleigh–Taylor mixing layer: mixing", 2.0),
            (900, 600),
        ),
        ("mixing, long run", mixing(LONG_TITLE, 3.6e4), (900, 600)),
        (
            "mean FTLE",
            mean_ftle("Cavity: mean finite-time Lyapunov exponent", 3.7),
            (900, 600),
        ),
        ("mean FTLE, huge", mean_ftle("huge", 2.5e7), (900, 600)),
    ];
    for (name, chart, size) in &charts {
        check_chart(name, chart, *size);
    }
}

#[test]
fn stability_curve_and_map_keep_every_text_inside_and_apart() {
    let k = linspace(0.05, 6.0, 120);
    let curve: Vec<lamella_post::stability::CurvePoint> = k
        .iter()
        .map(|&k| lamella_post::stability::CurvePoint {
            wavenumber: k,
            speed: c64::new(0.4, 0.0),
            growth_rate: 0.02 * k * (2.0 - k) * (-0.3 * k).exp(),
        })
        .collect();
    check_chart("stability curve", &growth_curve_chart(&curve), (800, 560));
    let ms = log_spaced(0.1, 100.0, 9);
    let ns = log_spaced(0.2, 5.0, 9);
    let map = map_points(&ms, &ns, |m, n| {
        0.03 * (m - 1.0) * (n * n - m) / (1.0 + m * m)
    });
    let (png, layout) = map_chart(&map, 10.0, 1.0).render(800, 560).unwrap();
    assert!(png.starts_with(b"\x89PNG"));
    check("stability map", &layout);
    assert!(layout.texts_of(Role::BarTick).count() >= 3);
    assert!(layout.texts_of(Role::BarTitle).next().is_some());
    // Extreme rates, one sign only, a long title.
    let map = map_points(&ms, &ns, |m, _| -1e6 * m);
    let mut chart = map_chart(&map, 12345.678, 0.001);
    chart.title = LONG_TITLE.into();
    check(
        "stability map, all stable",
        &chart.render(800, 560).unwrap().1,
    );
}

#[test]
fn stability_map_has_ticks_below_n_one_and_colours_by_sign() {
    let ms = log_spaced(2.0, 50.0, 6);
    let ns = log_spaced(0.2, 0.8, 6);
    let map = map_points(&ms, &ns, |m, n| if m > 10.0 * n { 0.02 } else { -0.5 });
    let chart = map_chart(&map, 1.0, 2.5);
    let layout = chart.render(800, 560).unwrap().1;
    check("map below n = 1", &layout);
    let x_ticks: Vec<&str> = layout
        .texts_of(Role::XTick)
        .map(|t| t.text.as_str())
        .collect();
    assert!(x_ticks.len() >= 3, "{x_ticks:?}");
    assert!(
        x_ticks.contains(&"0.2") && x_ticks.contains(&"0.5"),
        "{x_ticks:?}"
    );
    // Growth is red, decay blue, zero the light centre of the diverging map.
    let (r, g, b) = chart.colour_of(0.02);
    assert!(r > 90 && r > 2 * b && g < 60, "growth {:?}", (r, g, b));
    let (r, g, b) = chart.colour_of(-0.5);
    assert!(b > 80 && r < 50, "decay {:?}", (r, g, b));
    let (r, g, b) = chart.colour_of(0.0);
    assert!(r > 230 && g > 230 && b > 230, "zero {:?}", (r, g, b));
    // Round-off around a neutral mode (one liquid, m = 1) is drawn as neither growth nor decay.
    let one_liquid = map_points(&[1.0], &[2.0], |_, _| 5e-16);
    assert!(!one_liquid[0].is_unstable());
    assert_eq!(map_chart(&one_liquid, 1.0, 2.5).points[0].value, 0.0);
    // Legend names both markers and the neutral curves.
    let legend: Vec<&str> = layout
        .texts_of(Role::Legend)
        .map(|t| t.text.as_str())
        .collect();
    for name in ["unstable", "stable", "m = n²"] {
        assert!(legend.iter().any(|l| l.contains(name)), "{legend:?}");
    }
}

fn map_frame(title: &str, value_label: &str, upper: [f64; 2], range: Option<[f64; 2]>) -> MapFrame {
    MapFrame {
        title: title.into(),
        x_label: "x (m)".into(),
        y_label: "y (m)".into(),
        value_label: value_label.into(),
        lower: [0.0, 0.0],
        upper,
        range,
    }
}

#[test]
fn field_and_scatter_maps_keep_every_text_inside_and_apart() {
    let (nx, ny) = (40, 20);
    let fraction: Vec<f64> = (0..nx * ny)
        .map(|k| {
            ((k / nx) as f64 / ny as f64 + 0.1 * ((k % nx) as f64 * 0.3).sin()).clamp(0.0, 1.0)
        })
        .collect();
    let cases = [
        map_frame(
            "volume fraction of lower, t = 0.5000 s",
            "volume fraction (1)",
            [2e-3, 1e-3],
            Some([0.0, 1.0]),
        ),
        map_frame(
            LONG_TITLE,
            "volume fraction (1)",
            [2e-3, 1e-3],
            Some([0.0, 1.0]),
        ),
        map_frame(
            "tall",
            "volume fraction (1)",
            [1e-3, 4e-3],
            Some([0.0, 1.0]),
        ),
        map_frame(
            "wide strip",
            "volume fraction (1)",
            [5.0, 0.1],
            Some([0.0, 1.0]),
        ),
    ];
    for frame in &cases {
        let (_, layout) = field_map_layout(frame, [nx, ny], &fraction, 640).unwrap();
        check(&frame.title, &layout);
    }
    let points: Vec<[f64; 2]> = (0..400)
        .map(|k| {
            [
                (k % 20) as f64 * 1e-4 + 5e-5,
                (k / 20) as f64 * 5e-5 + 2.5e-5,
            ]
        })
        .collect();
    for (label, scale) in [
        ("FTLE (1/s)", 3.7),
        ("FTLE (1/s)", 1.234e-7),
        ("FTLE (1/s)", -8.8e9),
    ] {
        let values: Vec<f64> = (0..400).map(|k| scale * (k as f64 * 0.37).sin()).collect();
        let frame = map_frame(
            "finite-time Lyapunov exponent, t = 0.2500 s, slice z = 5.000e-4 m",
            label,
            [2e-3, 1e-3],
            None,
        );
        let (_, layout) = scatter_map_layout(&frame, &points, &values, 1e-4, 640).unwrap();
        check(&format!("scatter at scale {scale}"), &layout);
    }
}
