# Reference values for functions/engine/distributions.ts, from R's stats package.
#
# Run from the repository root (relative paths only; not run in CI):
#   Rscript test/reference/scripts/distributions.R
# writes test/reference/distributions.json.
#
# Functions used (R's stats package; see the "commands" entry of the JSON):
#   pt(t, df, lower.tail = TRUE / FALSE)      Student t tails (R: pbeta, TOMS 708 bratio)
#   pf(f, d1, d2, lower.tail = FALSE / TRUE)  F tails (R: pbeta)
#   pchisq(x, df, lower.tail = FALSE / TRUE)  chi-square tails (R: pgamma)
#   pnorm(z, lower.tail = FALSE / TRUE)       normal tails (R: Cody 1969/1993)
#   qt(p, df), qnorm(p), qchisq(p, df), qf(p, d1, d2)
#
# Every number is printed with sprintf("%.17g") by the small writer below, so that the JSON
# round-trips every double exactly. (jsonlite 1.8.4's toJSON(digits = NA) prints only 15
# significant digits, which would round the references; it is not used for numbers here.)
#
# Probabilities below 1e-300 are left out (they are near or in the subnormal range, where a
# double has fewer than 53 bits and a relative comparison means nothing); so are quantiles that
# under- or overflow.

out_path <- file.path("test", "reference", "distributions.json")
if (!dir.exists(dirname(out_path))) {
  stop("run this script from the repository root: Rscript test/reference/scripts/distributions.R")
}

source(file.path("test", "reference", "scripts", "json17.R"))  # json_num, json_str, to_json, scalar

# a table (data frame) as a list of row objects with scalar fields
rows_of <- function(df) {
  lapply(seq_len(nrow(df)), function(i) {
    r <- lapply(df[i, , drop = FALSE], function(col) scalar(col[[1]]))
    names(r) <- names(df)
    r
  })
}

TINY <- 1e-300
keep_p <- function(p) is.finite(p) & p >= TINY

# ---- Student t tails -------------------------------------------------------------------------
t_grid <- c(-1000, -100, -40, -20, -12, -10, -8, -6, -5, -4, -3, -2.5, -2, -1.5, -1, -0.5, -0.1,
            -1e-3, 0, 1e-3, 0.1, 0.5, 1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10, 12, 20, 40, 100, 1000)
t_df <- c(1, 2, 3, 4, 5, 7, 10, 15, 20, 30, 50, 100, 200, 500, 1000, 1e4, 1e5, 4e5, 1e6, 1e7, 2.5, 0.5)
pt_tab <- expand.grid(t = t_grid, df = t_df)
pt_tab$lower <- pt(pt_tab$t, pt_tab$df, lower.tail = TRUE)
pt_tab$upper <- pt(pt_tab$t, pt_tab$df, lower.tail = FALSE)
# huge |t| on few df (t^2 overflows a double beyond 1.3e154; the quantile search reaches there)
pt_huge <- expand.grid(t = c(-1e200, -1e100, -1e10, 1e10, 1e100, 1e200), df = c(1, 2, 3))
pt_huge$lower <- pt(pt_huge$t, pt_huge$df, lower.tail = TRUE)
pt_huge$upper <- pt(pt_huge$t, pt_huge$df, lower.tail = FALSE)
pt_tab <- rbind(pt_tab, pt_huge)
pt_tab <- pt_tab[keep_p(pt_tab$lower) & keep_p(pt_tab$upper), ]

# ---- F tails ---------------------------------------------------------------------------------
f_grid <- c(1e-4, 1e-3, 0.01, 0.1, 0.5, 0.9, 1, 1.1, 2, 3, 4, 5, 10, 20, 50, 100, 400, 1000, 1e4, 1e6)
f_df <- rbind(c(1, 1), c(1, 2), c(1, 10), c(2, 10), c(2, 1000), c(3, 30), c(4, 100), c(5, 5),
              c(10, 10), c(10, 1000), c(1, 1e6), c(20, 3), c(50, 50), c(3, 1e4), c(100, 200),
              c(2, 2), c(7, 40), c(2, 1e6), c(5, 1e5), c(30, 1e6), c(1, 3), c(3, 997))
pf_tab <- do.call(rbind, lapply(seq_len(nrow(f_df)), function(i) data.frame(f = f_grid, d1 = f_df[i, 1], d2 = f_df[i, 2])))
# even and odd d1 against a large d2 (the regression F test on many rows)
pf_big_df <- expand.grid(d1 = c(2, 3, 4, 5, 6, 8, 9, 10, 11, 20, 21, 30, 40, 50, 61, 100, 1000), d2 = c(100, 500, 899, 999, 1000, 5000, 9999, 1e4, 99999, 1e5, 100001, 1e6, 1000001))
pf_big <- do.call(rbind, lapply(seq_len(nrow(pf_big_df)), function(i)
  data.frame(f = c(0.01, 0.2, 0.5, 0.9, 1, 1.1, 1.5, 2, 3, 5, 10, 20, 50, 100), d1 = pf_big_df$d1[i], d2 = pf_big_df$d2[i])))
pf_tab <- rbind(pf_tab, pf_big)
pf_tab$upper <- pf(pf_tab$f, pf_tab$d1, pf_tab$d2, lower.tail = FALSE)
pf_tab$lower <- pf(pf_tab$f, pf_tab$d1, pf_tab$d2, lower.tail = TRUE)
pf_tab <- pf_tab[keep_p(pf_tab$upper) & keep_p(pf_tab$lower), ]

# ---- chi-square tails ------------------------------------------------------------------------
x_grid <- c(1e-6, 1e-3, 0.01, 0.1, 0.5, 1, 2, 3, 5, 8, 10, 15, 20, 30, 50, 100, 200, 500, 1000, 1400)
x_df <- c(1, 2, 3, 4, 5, 7, 10, 20, 30, 50, 100, 200, 1000, 1e4)
pc_tab <- expand.grid(x = x_grid, df = x_df)
pc_tab$upper <- pchisq(pc_tab$x, pc_tab$df, lower.tail = FALSE)
pc_tab$lower <- pchisq(pc_tab$x, pc_tab$df, lower.tail = TRUE)
# large df around and beyond the centre (x / 2 > 1000 is a separate code path in some libraries)
pc_big <- do.call(rbind, lapply(c(600, 1000, 2001, 2500, 5000, 1e4, 4e4, 1e5, 2e5), function(k)
  data.frame(x = k * c(0.5, 0.7, 0.8, 0.9, 0.95, 0.99, 1, 1.01, 1.05, 1.1, 1.2, 1.5, 2, 3, 4), df = k)))
pc_big <- rbind(pc_big, expand.grid(x = c(2001, 2100, 2500, 3000), df = c(300, 400, 500, 800, 1200)))
pc_big$upper <- pchisq(pc_big$x, pc_big$df, lower.tail = FALSE)
pc_big$lower <- pchisq(pc_big$x, pc_big$df, lower.tail = TRUE)
pc_tab <- rbind(pc_tab, pc_big)
pc_tab <- pc_tab[keep_p(pc_tab$upper) & keep_p(pc_tab$lower), ]

# ---- normal tails ----------------------------------------------------------------------------
z_grid <- c(-37, -35, -30, -25, -20, -15, -10, -8, -6, -5, -4, -3, -2.5, -1.959963984540054, -1.5,
            -1, -0.5, -0.1, -1e-8, 0, 1e-8, 0.1, 0.5, 1, 1.5, 1.959963984540054, 2.5, 3, 4, 5, 6, 8,
            10, 15, 20, 25, 30, 35, 37)
pn_tab <- data.frame(z = z_grid)
pn_tab$upper <- pnorm(z_grid, lower.tail = FALSE)
pn_tab$lower <- pnorm(z_grid, lower.tail = TRUE)
pn_tab <- pn_tab[keep_p(pn_tab$upper) & keep_p(pn_tab$lower), ]

# ---- quantiles -------------------------------------------------------------------------------
# R's own quantile functions are not uniformly accurate far out in the tails:
#  * qf(p, d1, d2) returns qchisq(p, d1) / d1 when d2 > 4e5 (an approximation, about 4e-7
#    relative at d1 = 1, d2 = 1e6), and otherwise forms (1 / qbeta(...) - 1) * d2 / d1, which
#    cancels when the quantile is small (qf(1e-20, 3, 30) gives back pf(q) = 1.039e-20);
#  * qt(p, df) skips its final Newton steps when the density underflows (qt(1e-300, 2.5): pt of it
#    is 0.99998e-300).
# So each reference quantile is the root of R's own distribution function, found by Newton's
# method on the log of the tail probability (the lower tail for p <= 0.5, the upper tail 1 - p,
# which is exact in double arithmetic for p >= 0.5, otherwise), started from R's q-function:
#   q <- q - (log F(q) - log p) / (f(q) / F(q))      with pt/pf/pchisq/pnorm(..., log.p = TRUE)
# and dt/df/dchisq/dnorm(..., log = TRUE). R's tail functions are accurate to a few units in
# 1e-14 relative in the regions used (checked independently), and a quantile's relative error is
# that divided by |q f(q) / F(q)|. The unrefined R value is kept beside it as "r_q".
p_grid <- c(1e-300, 1e-200, 1e-100, 1e-50, 1e-20, 1e-10, 1e-6, 1e-4, 1e-3, 0.005, 0.01, 0.025, 0.05,
            0.1, 0.25, 0.4, 0.5 - 1e-12, 0.5, 0.5 + 2^-53, 0.5 + 1e-12, 0.6, 0.75, 0.8, 0.9, 0.95,
            0.975, 0.99, 0.995, 0.999, 0.9995, 0.999999)
keep_q <- function(q) is.finite(q) & (q == 0 | abs(q) >= TINY) & abs(q) < 1e300

# Newton on the log tail probability; log_tail(q, lower) and log_dens(q) are R's functions.
# With log_central given (normal and t) and |p - 1/2| < 1/4, the root is found on the central
# probability P(0 < X < |q|) = |p - 1/2| instead (p - 1/2 is exact there), because the tails near
# 1/2 carry only absolute precision and would leave a tiny quantile with few correct digits:
# log_central(q) = log(pchisq(q^2, 1) / 2) for the normal, log(pbeta(q^2 / (df + q^2), 1/2, df/2) / 2)
# for t.
refine_root <- function(q, p, log_tail, log_dens, positive = FALSE, max_it = 60, log_central = NULL,
                        central_target = NULL) {
  if (!is.finite(q)) return(q)
  if (!is.null(log_central) && abs(p - 0.5) < 0.25) {
    if (p == 0.5) return(0)
    s <- sign(p - 0.5)
    r <- refine_root(abs(q), 0.5 - abs(p - 0.5), function(x, lo) log_central(x), log_dens,
                     positive = TRUE, max_it = max_it, central_target = log(abs(p - 0.5)))
    return(s * r)
  }
  lower <- p <= 0.5
  target <- if (lower) log(p) else log1p(-p)
  if (!is.null(central_target)) {
    lower <- TRUE # the central probability rises with q
    target <- central_target
  }
  best <- q
  best_g <- Inf
  for (it in seq_len(max_it)) {
    lt <- log_tail(q, lower)
    g <- lt - target
    if (is.finite(g) && abs(g) < best_g) { best <- q; best_g <- abs(g) }
    if (!is.finite(g) || g == 0) break
    slope <- exp(log_dens(q) - lt) * (if (lower) 1 else -1)
    qn <- q - g / slope
    if (!is.finite(qn)) break
    if (positive && qn <= 0) qn <- q / 2
    if (abs(qn - q) <= 2e-16 * abs(q)) {
      g2 <- log_tail(qn, lower) - target
      if (is.finite(g2) && abs(g2) < best_g) { best <- qn; best_g <- abs(g2) }
      break
    }
    q <- qn
  }
  best
}

qn_tab <- data.frame(p = p_grid)
qn_tab$r_q <- qnorm(p_grid)
qn_tab$q <- mapply(function(q, p) refine_root(q, p,
  function(x, lo) pnorm(x, lower.tail = lo, log.p = TRUE),
  function(x) dnorm(x, log = TRUE),
  log_central = function(x) log(pchisq(x^2, 1) / 2)), qn_tab$r_q, qn_tab$p)
qn_tab <- qn_tab[keep_q(qn_tab$q), c("p", "q", "r_q")]

qt_tab <- expand.grid(p = p_grid, df = c(1, 2, 3, 4, 5, 10, 20, 30, 100, 1000, 1e4, 1e6, 2.5))
qt_tab$r_q <- qt(qt_tab$p, qt_tab$df)
qt_tab$q <- mapply(function(q, p, df) refine_root(q, p,
  function(x, lo) pt(x, df, lower.tail = lo, log.p = TRUE),
  function(x) dt(x, df, log = TRUE),
  log_central = function(x) log(pbeta(x^2 / (df + x^2), 0.5, df / 2) / 2)), qt_tab$r_q, qt_tab$p, qt_tab$df)
qt_tab <- qt_tab[keep_q(qt_tab$q), c("p", "df", "q", "r_q")]

qc_tab <- expand.grid(p = p_grid, df = c(1, 2, 3, 4, 5, 10, 20, 30, 100, 1000, 2500, 1e4, 1e5))
qc_tab$r_q <- qchisq(qc_tab$p, qc_tab$df)
qc_tab$q <- mapply(function(q, p, df) refine_root(q, p,
  function(x, lo) pchisq(x, df, lower.tail = lo, log.p = TRUE),
  function(x) dchisq(x, df, log = TRUE), positive = TRUE), qc_tab$r_q, qc_tab$p, qc_tab$df)
qc_tab <- qc_tab[keep_q(qc_tab$q) & qc_tab$q > 0, c("p", "df", "q", "r_q")]

qf_df <- rbind(c(1, 1), c(1, 10), c(2, 1000), c(3, 30), c(5, 5), c(10, 100), c(1, 1e6), c(20, 3),
               c(4, 96), c(2, 2), c(10, 1e5), c(4, 1e6), c(30, 1e6), c(9, 99991))
qf_tab <- do.call(rbind, lapply(seq_len(nrow(qf_df)), function(i) data.frame(p = p_grid, d1 = qf_df[i, 1], d2 = qf_df[i, 2])))
qf_tab$r_q <- qf(qf_tab$p, qf_tab$d1, qf_tab$d2)
qf_tab$q <- mapply(function(q, p, d1, d2) refine_root(q, p,
  function(x, lo) pf(x, d1, d2, lower.tail = lo, log.p = TRUE),
  function(x) df(x, d1, d2, log = TRUE), positive = TRUE), qf_tab$r_q, qf_tab$p, qf_tab$d1, qf_tab$d2)
qf_tab <- qf_tab[keep_q(qf_tab$q) & qf_tab$q > 0, c("p", "d1", "d2", "q", "r_q")]

# ---- how well each quantile reproduces its p through R's distribution function (for the record)
# relative error of the reproduced tail: lower tail against p for p <= 0.5, upper against 1 - p
roundtrip <- function(p, lower_fun, upper_fun) {
  max(ifelse(p <= 0.5, abs(lower_fun - p) / p, abs(upper_fun - (1 - p)) / (1 - p)))
}
consistency <- list(
  qnorm_raw = scalar(roundtrip(qn_tab$p, pnorm(qn_tab$r_q), pnorm(qn_tab$r_q, lower.tail = FALSE))),
  qnorm_refined = scalar(roundtrip(qn_tab$p, pnorm(qn_tab$q), pnorm(qn_tab$q, lower.tail = FALSE))),
  qt_raw = scalar(roundtrip(qt_tab$p, pt(qt_tab$r_q, qt_tab$df), pt(qt_tab$r_q, qt_tab$df, lower.tail = FALSE))),
  qt_refined = scalar(roundtrip(qt_tab$p, pt(qt_tab$q, qt_tab$df), pt(qt_tab$q, qt_tab$df, lower.tail = FALSE))),
  qchisq_raw = scalar(roundtrip(qc_tab$p, pchisq(qc_tab$r_q, qc_tab$df), pchisq(qc_tab$r_q, qc_tab$df, lower.tail = FALSE))),
  qchisq_refined = scalar(roundtrip(qc_tab$p, pchisq(qc_tab$q, qc_tab$df), pchisq(qc_tab$q, qc_tab$df, lower.tail = FALSE))),
  qf_raw = scalar(roundtrip(qf_tab$p, pf(qf_tab$r_q, qf_tab$d1, qf_tab$d2), pf(qf_tab$r_q, qf_tab$d1, qf_tab$d2, lower.tail = FALSE))),
  qf_refined = scalar(roundtrip(qf_tab$p, pf(qf_tab$q, qf_tab$d1, qf_tab$d2), pf(qf_tab$q, qf_tab$d1, qf_tab$d2, lower.tail = FALSE))),
  note = scalar("max over the grid of the relative error of the reproduced tail (R's lower tail against p for p <= 0.5, R's upper tail against 1 - p above); raw = R's q-function, refined = the reference")
)

# ---- write -----------------------------------------------------------------------------------
result <- list(
  source = scalar(paste("R", paste(R.version$major, R.version$minor, sep = "."), "stats package;",
                        "generated by test/reference/scripts/distributions.R")),
  r_version = scalar(R.version.string),
  commands = list(
    pt = scalar("pt(t, df, lower.tail = TRUE) and pt(t, df, lower.tail = FALSE)"),
    pf = scalar("pf(f, d1, d2, lower.tail = FALSE) and pf(f, d1, d2, lower.tail = TRUE)"),
    pchisq = scalar("pchisq(x, df, lower.tail = FALSE) and pchisq(x, df, lower.tail = TRUE)"),
    pnorm = scalar("pnorm(z, lower.tail = FALSE) and pnorm(z, lower.tail = TRUE)"),
    qnorm = scalar("q: refine_root(qnorm(p), p, pnorm(., log.p = TRUE), dnorm(., log = TRUE)); r_q: qnorm(p)"),
    qt = scalar("q: refine_root(qt(p, df), p, pt(., df, log.p = TRUE), dt(., df, log = TRUE)); r_q: qt(p, df)"),
    qchisq = scalar("q: refine_root(qchisq(p, df), p, pchisq(., df, log.p = TRUE), dchisq(., df, log = TRUE)); r_q: qchisq(p, df)"),
    qf = scalar("q: refine_root(qf(p, d1, d2), p, pf(., d1, d2, log.p = TRUE), df(., d1, d2, log = TRUE)); r_q: qf(p, d1, d2)"),
    refine_root = scalar("Newton's method on log P(q) - log p (lower tail for p <= 0.5, else the upper tail against log1p(-p)), from R's q-function, keeping the iterate with the smallest residual; see the script"),
    filter = scalar("probabilities kept only where both tails are >= 1e-300; quantiles kept where finite, non-zero and within [1e-300, 1e300] in absolute value"),
    printing = scalar("sprintf('%.17g') for every number")
  ),
  r_roundtrip_max_relative_error = consistency,
  pt = rows_of(pt_tab),
  pf = rows_of(pf_tab),
  pchisq = rows_of(pc_tab),
  pnorm = rows_of(pn_tab),
  qnorm = rows_of(qn_tab),
  qt = rows_of(qt_tab),
  qchisq = rows_of(qc_tab),
  qf = rows_of(qf_tab)
)
writeLines(to_json(result), out_path)
cat("wrote", out_path, ":", nrow(pt_tab), "pt,", nrow(pf_tab), "pf,", nrow(pc_tab), "pchisq,",
    nrow(pn_tab), "pnorm,", nrow(qn_tab), "qnorm,", nrow(qt_tab), "qt,", nrow(qc_tab), "qchisq,",
    nrow(qf_tab), "qf\n")
print(consistency)
