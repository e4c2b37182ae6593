//! Coefficients of the DOP853 pair (Hairer, Nørsett & Wanner 1993, *Solving Ordinary
//! Differential Equations I*, §II.10; Prince & Dormand 1981, J. Comput. Appl. Math. 7, 67),
//! to 30 digits as distributed with SciPy's `integrate` module (a general-purpose library;
//! originally from Hairer's `dop853`). Only the twelve stages of a step are kept; the
//! dense-output stages are not used. The tests check the order conditions up to order eight
//! on the eighth-order weights and the orders of the two error estimates.

#![allow(clippy::excessive_precision, clippy::unreadable_literal)]

/// Stages per step.
pub(super) const STAGES: usize = 12;

/// The nodes c_i (not needed for an autonomous system; used by the order tests).
#[cfg_attr(not(test), allow(dead_code))]
pub(super) const C: [f64; STAGES] = [
    0.0,
    0.526001519587677318785587544488e-01,
    0.789002279381515978178381316732e-01,
    0.118350341907227396726757197510,
    0.281649658092772603273242802490,
    0.333333333333333333333333333333,
    0.25,
    0.307692307692307692307692307692,
    0.651282051282051282051282051282,
    0.6,
    0.857142857142857142857142857142,
    1.0,
];

/// The stage matrix a_ij (lower triangular).
pub(super) const A: [[f64; STAGES]; STAGES] = [
    [0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0],
    [
        5.26001519587677318785587544488e-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        1.97250569845378994544595329183e-2,
        5.91751709536136983633785987549e-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        2.95875854768068491816892993775e-2,
        0.0,
        8.87627564304205475450678981324e-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        2.41365134159266685502369798665e-1,
        0.0,
        -8.84549479328286085344864962717e-1,
        9.24834003261792003115737966543e-1,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        3.7037037037037037037037037037e-2,
        0.0,
        0.0,
        1.70828608729473871279604482173e-1,
        1.25467687566822425016691814123e-1,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        3.7109375e-2,
        0.0,
        0.0,
        1.70252211019544039314978060272e-1,
        6.02165389804559606850219397283e-2,
        -1.7578125e-2,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        3.70920001185047927108779319836e-2,
        0.0,
        0.0,
        1.70383925712239993810214054705e-1,
        1.07262030446373284651809199168e-1,
        -1.53194377486244017527936158236e-2,
        8.27378916381402288758473766002e-3,
        0.0,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        6.24110958716075717114429577812e-1,
        0.0,
        0.0,
        -3.36089262944694129406857109825,
        -8.68219346841726006818189891453e-1,
        2.75920996994467083049415600797e1,
        2.01540675504778934086186788979e1,
        -4.34898841810699588477366255144e1,
        0.0,
        0.0,
        0.0,
        0.0,
    ],
    [
        4.77662536438264365890433908527e-1,
        0.0,
        0.0,
        -2.48811461997166764192642586468,
        -5.90290826836842996371446475743e-1,
        2.12300514481811942347288949897e1,
        1.52792336328824235832596922938e1,
        -3.32882109689848629194453265587e1,
        -2.03312017085086261358222928593e-2,
        0.0,
        0.0,
        0.0,
    ],
    [
        -9.3714243008598732571704021658e-1,
        0.0,
        0.0,
        5.18637242884406370830023853209,
        1.09143734899672957818500254654,
        -8.14978701074692612513997267357,
        -1.85200656599969598641566180701e1,
        2.27394870993505042818970056734e1,
        2.49360555267965238987089396762,
        -3.0467644718982195003823669022,
        0.0,
        0.0,
    ],
    [
        2.27331014751653820792359768449,
        0.0,
        0.0,
        -1.05344954667372501984066689879e1,
        -2.00087205822486249909675718444,
        -1.79589318631187989172765950534e1,
        2.79488845294199600508499808837e1,
        -2.85899827713502369474065508674,
        -8.87285693353062954433549289258,
        1.23605671757943030647266201528e1,
        6.43392746015763530355970484046e-1,
        0.0,
    ],
];

/// The eighth-order weights b_i.
pub(super) const B: [f64; STAGES] = [
    5.42937341165687622380535766363e-2,
    0.0,
    0.0,
    0.0,
    0.0,
    4.45031289275240888144113950566,
    1.89151789931450038304281599044,
    -5.8012039600105847814672114227,
    3.1116436695781989440891606237e-1,
    -1.52160949662516078556178806805e-1,
    2.01365400804030348374776537501e-1,
    4.47106157277725905176885569043e-2,
];

/// The third-order error weights: b_i minus the weights of the third-order solution.
pub(super) const E3: [f64; STAGES] = [
    5.42937341165687622380535766363e-2 - 0.244094488188976377952755905512,
    0.0,
    0.0,
    0.0,
    0.0,
    4.45031289275240888144113950566,
    1.89151789931450038304281599044,
    -5.8012039600105847814672114227,
    3.1116436695781989440891606237e-1 - 0.733846688281611857341361741547,
    -1.52160949662516078556178806805e-1,
    2.01365400804030348374776537501e-1,
    4.47106157277725905176885569043e-2 - 0.220588235294117647058823529412e-1,
];

/// The fifth-order error weights.
pub(super) const E5: [f64; STAGES] = [
    0.1312004499419488073250102996e-1,
    0.0,
    0.0,
    0.0,
    0.0,
    -0.1225156446376204440720569753e1,
    -0.4957589496572501915214079952,
    0.1664377182454986536961530415e1,
    -0.3503288487499736816886487290,
    0.3341791187130174790297318841,
    0.8192320648511571246570742613e-1,
    -0.2235530786388629525884427845e-1,
];

#[cfg(test)]
mod tests {
    use super::*;

    /// Σ_i w_i c_i^(k−1) for k = 1, 2, ...
    fn moment(w: &[f64; STAGES], k: i32) -> f64 {
        (0..STAGES).map(|i| w[i] * C[i].powi(k - 1)).sum()
    }

    /// b^T A^(k−1) 1, the coefficient of z^k in the stability function.
    fn linear_coefficient(k: usize) -> f64 {
        let mut v = [1.0; STAGES];
        for _ in 1..k {
            let mut next = [0.0; STAGES];
            for (i, n) in next.iter_mut().enumerate() {
                *n = (0..STAGES).map(|j| A[i][j] * v[j]).sum();
            }
            v = next;
        }
        (0..STAGES).map(|i| B[i] * v[i]).sum()
    }

    // Order conditions of Runge–Kutta methods (Butcher 1963, J. Austral. Math. Soc. 3, 185;
    // Hairer, Nørsett & Wanner 1993, §II.2): row sums Σ_j a_ij = c_i, the quadrature
    // conditions Σ b_i c_i^(k−1) = 1/k and the linear ("tall tree") conditions
    // b^T A^(k−1) 1 = 1/k! up to k = 8.
    #[test]
    fn the_weights_satisfy_the_order_conditions_to_order_eight() {
        for i in 0..STAGES {
            let row: f64 = A[i].iter().sum();
            assert!((row - C[i]).abs() < 1e-14, "row {i}: {row} vs {}", C[i]);
        }
        let mut factorial = 1.0;
        for k in 1..=8 {
            factorial *= k as f64;
            let q = moment(&B, k as i32);
            assert!(
                (q - 1.0 / k as f64).abs() < 1e-14,
                "quadrature k = {k}: {q}"
            );
            let l = linear_coefficient(k);
            assert!((l - 1.0 / factorial).abs() < 1e-14, "linear k = {k}: {l}");
        }
    }

    // The error estimates are differences of solutions of orders 5 and 3 (Hairer, Nørsett &
    // Wanner 1993, §II.10): their quadrature moments vanish up to k = 5 and k = 3, not beyond.
    #[test]
    fn the_error_estimates_have_orders_five_and_three() {
        for k in 1..=5 {
            assert!(moment(&E5, k).abs() < 1e-13, "E5 moment {k}");
        }
        assert!(moment(&E5, 6).abs() > 1e-6);
        for k in 1..=3 {
            assert!(moment(&E3, k).abs() < 1e-13, "E3 moment {k}");
        }
        assert!(moment(&E3, 4).abs() > 1e-6);
    }

    /// One fixed step of the pair for the planar Kepler problem (x, y, v_x, v_y), GM = 1.
    fn kepler_step(y: [f64; 4], h: f64) -> [f64; 4] {
        let f = |y: &[f64; 4]| {
            let r3 = (y[0] * y[0] + y[1] * y[1]).powf(1.5);
            [y[2], y[3], -y[0] / r3, -y[1] / r3]
        };
        let mut k = [[0.0; 4]; STAGES];
        for s in 0..STAGES {
            let mut z = y;
            for (i, zi) in z.iter_mut().enumerate() {
                *zi += h * (0..s).map(|j| A[s][j] * k[j][i]).sum::<f64>();
            }
            k[s] = f(&z);
        }
        let mut out = y;
        for (i, o) in out.iter_mut().enumerate() {
            *o += h * (0..STAGES).map(|j| B[j] * k[j][i]).sum::<f64>();
        }
        out
    }

    // Nonlinear check of the order: one period of a Kepler ellipse (e = 0.5, a = 1, period
    // 2π; Kepler's third law) returns to its start; with n fixed steps the error must fall as
    // n^−8: from 120 to 240 steps it falls by 189 (2^8 = 256 asymptotically; a seventh-order
    // method tends to 128). More than 160 is asked.
    #[test]
    fn a_kepler_period_converges_at_eighth_order() {
        let e: f64 = 0.5;
        // Pericentre at (1 − e, 0) with speed √((1 + e)/(1 − e)).
        let start = [1.0 - e, 0.0, 0.0, ((1.0 + e) / (1.0 - e)).sqrt()];
        let error = |n: usize| {
            let h = std::f64::consts::TAU / n as f64;
            let mut y = start;
            for _ in 0..n {
                y = kepler_step(y, h);
            }
            (0..4)
                .map(|i| (y[i] - start[i]).powi(2))
                .sum::<f64>()
                .sqrt()
        };
        let (coarse, fine) = (error(120), error(240));
        assert!(coarse / fine > 160.0, "{coarse:e} {fine:e}");
        assert!(fine < 1e-11, "{fine:e}");
    }
}
