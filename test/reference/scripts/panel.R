# Reference values for panels: fixed effects absorbed (one and two keys), cluster-robust errors one-
# and two-way, HAC within panel units, Driscoll-Kraay, weights, and PPML with fixed effects, from R's
# stats package (lm and glm with factor() terms: the exact reference for the slopes), the sandwich
# package (vcovHC, vcovCL, vcovPL) and plm (within estimator, vcovSCC), with estimatr's lm_robust
# compared where its conventions match.
#
# Run from the repository root (relative paths only; not run in CI):
#   Rscript test/reference/scripts/panel.R
# writes test/reference/panel.json.
#
# Open panel datasets shipping with plm and MASS:
#   plm::Grunfeld  10 firms x 20 years (balanced): log(inv) ~ log(value) + log(capital)
#   plm::Produc    48 states x 17 years (balanced): log(gsp) ~ log(pcap) + log(pc) + log(emp) + unemp;
#                  region (9 values) holds each state: the state effects are nested within region
#   plm::EmplUK    140 firms, 7-9 consecutive years each (unbalanced, 1031 rows): log(emp) ~ log(wage)
#                  + log(capital) + log(output)
#   MASS::epil     59 patients x 4 visits, seizure counts (patient 49... one patient has 0 in every
#                  visit): y ~ V4 + factor(subject) by PPML
#
# For every OLS case (weights w when given, as lm(weights = w)):
#   m <- lm(y ~ x... + factor(key1) [+ factor(key2)], weights = w)
#   slopes coef(m)[x]; a = m$rank - k (absorbed parameters; with one connected component G1 + G2 - 1);
#   classical sqrt(diag(vcov(m))); HC0..HC3 sqrt(diag(sandwich::vcovHC(m, type))) (HC2/HC3 one key
#   only: their leverage is that of the indicator regression);
#   cluster, one- or two-way, c = G/(G-1) (n-1)/(n-p) with p = k + a - a_n (a_n: the absorbed
#   parameters of the keys nested within a cluster variable):
#     V = sandwich::vcovCL(m, cluster = ~ c1 [+ c2], type = "HC0", cadjust = TRUE) * (n-1)/(n-p)
#   vcovCL's type = "HC1" applies (n-1)/(n-K) with K = m$rank = k + a, which is the same only when
#   no key is nested in a cluster variable (a_n = 0): the script checks that equality where it holds
#   and otherwise uses the formula above (also checked against V1 + V2 - V12 written out by hand);
#   HAC within units: sandwich::vcovPL(m, cluster = ~unit, order.by = ~time, aggregate = FALSE,
#     kernel = "Bartlett", lag = L, adjust = FALSE) (autocovariances inside each unit, summed; every
#     unit's years are consecutive, so period lags are row lags), also checked by hand;
#   Driscoll-Kraay: sandwich::vcovPL(m, ..., aggregate = TRUE, lag = L, adjust = FALSE), and for
#     unweighted cases plm::vcovSCC(plm(..., model = "within"), type = "HC0", maxlag = L) (equal);
#   default L = floor(4 (T/100)^(2/9)) (T: longest unit for HAC, number of periods for DK);
#   plm(..., model = "within", effect = "individual" | "twoways") slopes equal lm's (checked);
#   within R^2: 1 - RSS / sum(w * ytilde^2) with ytilde from lm(y ~ factors, weights = w)'s residuals;
#   full R^2 summary(m)$r.squared; weighted means weighted.mean(x, w).
# PPML (quasipoisson, glm.control(epsilon = 1e-14, maxit = 200), refit from the converged
#   coefficients so that the weights are those of the estimate):
#   absorbed values with y = 0 in every row are left out before fitting; coef(m)[x];
#   HC0 sqrt(diag(vcovHC(m, "HC0"))), HC1 sqrt(diag(vcovHC(m, "HC1"))) (= HC0 n/(n - rank));
#   cluster vcovCL(m, ~c, type = "HC0", cadjust = TRUE) * (n-1)/(n-p), p as above; the HC0 slope block
#   is also checked against (X~'WX~)^-1 X~' diag((w(y-mu))^2) X~ (X~'WX~)^-1 with W = diag(w mu) and
#   X~ the W-weighted within-transformed regressors; one case with prior weights (glm(weights = w)).

suppressPackageStartupMessages({
  library(sandwich)
  library(plm)
  library(MASS)
  library(estimatr)
})

out_path <- file.path("test", "reference", "panel.json")
if (!dir.exists(dirname(out_path))) stop("run this script from the repository root: Rscript test/reference/scripts/panel.R")
source(file.path("test", "reference", "scripts", "json17.R"))
check <- function(ok, what) if (!isTRUE(ok)) stop(what)
close_to <- function(a, b, tol = 1e-9) max(abs(a - b) / pmax(abs(b), 1e-300)) < tol
default_lags <- function(T) floor(4 * (T / 100)^(2 / 9))
codes0 <- function(v) as.integer(factor(v, levels = unique(v))) - 1L

sqrt_diag <- function(V, x) sqrt(diag(V)[x])

ols_case <- function(name, source, d, y, x, fe, clusters, unit, time, w = NULL, hac_lags = NULL) {
  n <- nrow(d)
  k <- length(x)
  d$.w <- if (is.null(w)) rep(1, n) else d[[w]]
  rhs <- c(x, paste0("factor(", fe, ")"))
  f <- as.formula(paste(y, "~", paste(rhs, collapse = " + ")))
  m <- if (is.null(w)) lm(f, data = d) else lm(f, data = d, weights = .w)
  check(!any(is.na(coef(m)[x])), paste(name, "slope aliased"))
  a <- m$rank - k
  b <- coef(m)[x]
  out <- list(name = scalar(name), source = scalar(source), n = scalar(n), k = scalar(k), absorbed = scalar(a),
              y = d[[y]], x = lapply(setNames(x, x), function(v) d[[v]]),
              keys = lapply(setNames(fe, fe), function(v) codes0(d[[v]])),
              weights = if (is.null(w)) NULL else d[[w]], coefficients = unname(b))
  se <- list(classical = sqrt_diag(vcov(m), x),
             HC0 = sqrt_diag(vcovHC(m, type = "HC0"), x), HC1 = sqrt_diag(vcovHC(m, type = "HC1"), x))
  if (length(fe) == 1) {
    se$HC2 <- sqrt_diag(vcovHC(m, type = "HC2"), x)
    se$HC3 <- sqrt_diag(vcovHC(m, type = "HC3"), x)
  }
  nested_of <- function(cl) {
    nested <- fe[vapply(fe, function(f) any(vapply(cl, function(cc) all(tapply(d[[cc]], d[[f]], function(v) length(unique(v))) == 1), TRUE)), TRUE)]
    if (length(nested) == 0) return(0)
    if (length(nested) == 1) return(length(unique(d[[nested]])))
    a
  }
  cl_out <- list()
  for (cl in clusters) {
    an <- nested_of(cl)
    p <- k + a - an
    cf <- as.formula(paste("~", paste(cl, collapse = " + ")))
    V <- vcovCL(m, cluster = cf, type = "HC0", cadjust = TRUE, multi0 = FALSE) * (n - 1) / (n - p)
    if (an == 0) check(close_to(diag(vcovCL(m, cluster = cf, type = "HC1", multi0 = FALSE))[x], diag(V)[x], 1e-9), paste(name, "vcovCL HC1"))
    # by hand: scores of the full model, V_j with G_j/(G_j - 1), two-way V1 + V2 - V12
    X <- model.matrix(m)[, !is.na(coef(m)), drop = FALSE]
    ef <- X * (d$.w * residuals(m))
    Bf <- solve(crossprod(X * sqrt(d$.w)))
    part <- function(g) { G <- length(unique(g)); S <- rowsum(ef, g); G / (G - 1) * crossprod(S) }
    meat <- if (length(cl) == 1) part(d[[cl]]) else part(d[[cl[1]]]) + part(d[[cl[2]]]) - part(paste(d[[cl[1]]], d[[cl[2]]]))
    Vh <- Bf %*% meat %*% Bf * (n - 1) / (n - p)
    check(close_to(diag(Vh)[x], diag(V)[x], 1e-8), paste(name, "cluster by hand"))
    G <- vapply(cl, function(cc) length(unique(d[[cc]])), 1)
    cl_out[[paste(cl, collapse = "+")]] <- list(clusters = cl, codes = lapply(setNames(cl, cl), function(v) codes0(d[[v]])),
      nested_absorbed = scalar(an), p = scalar(p), groups = unname(G), df = scalar(min(G) - 1),
      variance = unname(diag(V)[x]), se = unname(sqrt(pmax(diag(V)[x], 0))))
  }
  out$cluster <- cl_out
  # HAC within units and Driscoll-Kraay
  Tunit <- max(table(d[[unit]]))
  Tper <- length(unique(d[[time]]))
  d$.unit <- d[[unit]]
  d$.time <- d[[time]]
  hac <- list()
  for (L in unique(c(default_lags(Tunit), hac_lags))) {
    V <- vcovPL(m, cluster = ~.unit, order.by = ~.time, aggregate = FALSE, kernel = "Bartlett", lag = L, adjust = FALSE)
    hac[[as.character(L)]] <- sqrt_diag(V, x)
  }
  dk <- list()
  for (L in unique(c(default_lags(Tper), hac_lags))) {
    V <- vcovPL(m, cluster = ~.unit, order.by = ~.time, aggregate = TRUE, kernel = "Bartlett", lag = L, adjust = FALSE)
    dk[[as.character(L)]] <- sqrt_diag(V, x)
  }
  out$unit <- scalar(unit)
  out$time <- scalar(time)
  # units in row order must be contiguous (the data are sorted by unit, then time)
  check(!any(duplicated(rle(as.character(d[[unit]]))$values)), paste(name, "units not contiguous"))
  out$period_codes <- as.integer(factor(d[[time]], levels = sort(unique(d[[time]])))) - 1L
  out$default_hac_lags <- scalar(default_lags(Tunit))
  out$default_dk_lags <- scalar(default_lags(Tper))
  out$hac_within <- hac
  out$driscoll_kraay <- dk
  # within R^2 and full R^2, weighted means
  ff <- as.formula(paste(y, "~", paste(paste0("factor(", fe, ")"), collapse = " + ")))
  m0 <- if (is.null(w)) lm(ff, data = d) else lm(ff, data = d, weights = .w)
  out$within_r_squared <- scalar(1 - sum(d$.w * residuals(m)^2) / sum(d$.w * residuals(m0)^2))
  out$r_squared <- scalar(summary(m)$r.squared)
  out$means <- unname(vapply(x, function(v) weighted.mean(d[[v]], d$.w), 1))
  out$y_mean <- scalar(weighted.mean(d[[y]], d$.w))
  out$se <- lapply(se, unname)
  # cross-checks with plm (unweighted) and estimatr
  if (is.null(w)) {
    pd <- pdata.frame(d, index = c(unit, time))
    pf <- as.formula(paste(y, "~", paste(x, collapse = " + ")))
    eff <- if (length(fe) == 2) "twoways" else "individual"
    if (length(fe) == 1 && fe[1] == unit) {
      pm <- plm(pf, data = pd, model = "within", effect = eff)
      check(close_to(coef(pm)[x], b, 1e-10), paste(name, "plm slopes"))
      for (L in names(dk)) check(close_to(sqrt_diag(vcovSCC(pm, type = "HC0", maxlag = as.numeric(L)), x), dk[[L]], 1e-9), paste(name, "vcovSCC"))
      out$plm_within_r_squared <- scalar(unname(summary(pm)$r.squared["rsq"]))
      # plm::vcovNW is not the within-unit HAC of this file (recorded for the report)
      out$plm_vcovNW_matches_hac_within <- scalar(close_to(sqrt_diag(vcovNW(pm, maxlag = default_lags(Tunit)), x), hac[[as.character(default_lags(Tunit))]], 1e-9))
    }
    if (length(fe) == 2) {
      pm <- plm(pf, data = pd, model = "within", effect = "twoways")
      check(close_to(coef(pm)[x], b, 1e-9), paste(name, "plm two-way slopes"))
      for (L in names(dk)) check(close_to(sqrt_diag(vcovSCC(pm, type = "HC0", maxlag = as.numeric(L)), x), dk[[L]], 1e-8), paste(name, "vcovSCC two-way"))
    }
    # estimatr: CR0 is the plain Liang-Zeger sandwich (no factor); check it against c = 1
    cl1 <- clusters[[1]][1]
    fef <- as.formula(paste("~", paste(fe, collapse = " + ")))
    er <- lm_robust(pf, data = d, fixed_effects = !!fef, clusters = d[[cl1]], se_type = "CR0")
    V0 <- vcovCL(m, cluster = as.formula(paste("~", cl1)), type = "HC0", cadjust = FALSE)
    check(close_to(er$std.error[x], sqrt_diag(V0, x), 1e-8), paste(name, "estimatr CR0"))
  }
  out$plm_checked <- scalar(is.null(w))
  out
}

grun <- local({ data("Grunfeld", package = "plm"); g <- Grunfeld; g <- g[order(g$firm, g$year), ]
  data.frame(firm = g$firm, year = g$year, ly = log(g$inv), lvalue = log(g$value), lcapital = log(g$capital),
             inv = g$inv, value = g$value) })
prod_d <- local({ data("Produc", package = "plm"); p <- Produc; p <- p[order(p$state, p$year), ]
  data.frame(state = as.character(p$state), year = p$year, region = as.integer(as.character(p$region)),
             gsp = p$gsp, ly = log(p$gsp), lpcap = log(p$pcap), lpc = log(p$pc), lemp = log(p$emp), unemp = p$unemp, emp = p$emp) })
empl <- local({ data("EmplUK", package = "plm"); e <- EmplUK; e <- e[order(e$firm, e$year), ]
  data.frame(firm = e$firm, year = e$year, ly = log(e$emp), lwage = log(e$wage), lcapital = log(e$capital), loutput = log(e$output)) })

cases <- list(
  ols_case("grunfeld_oneway", "plm::Grunfeld", grun, "ly", c("lvalue", "lcapital"), "firm",
           list("firm", "year", c("firm", "year")), "firm", "year", hac_lags = 3),
  ols_case("grunfeld_twoway", "plm::Grunfeld", grun, "ly", c("lvalue", "lcapital"), c("firm", "year"),
           list("firm", "year", c("firm", "year")), "firm", "year", hac_lags = 3),
  ols_case("produc_oneway", "plm::Produc", prod_d, "ly", c("lpcap", "lpc", "lemp", "unemp"), "state",
           list("state", "year", "region", c("state", "year")), "state", "year"),
  ols_case("produc_twoway", "plm::Produc", prod_d, "ly", c("lpcap", "lpc", "lemp", "unemp"), c("state", "year"),
           list("state", "region", c("state", "year"), c("region", "year")), "state", "year"),
  ols_case("empluk_twoway", "plm::EmplUK", empl, "ly", c("lwage", "lcapital", "loutput"), c("firm", "year"),
           list("firm", c("firm", "year")), "firm", "year"),
  ols_case("empluk_oneway", "plm::EmplUK", empl, "ly", c("lwage", "lcapital", "loutput"), "firm",
           list("firm", "year"), "firm", "year"),
  ols_case("produc_weighted_oneway", "plm::Produc, weights emp", prod_d, "ly", c("lpcap", "lpc", "unemp"), "state",
           list("state", "region", c("state", "year")), "state", "year", w = "emp"),
  ols_case("grunfeld_weighted_twoway", "plm::Grunfeld, weights value", grun, "ly", c("lcapital"), c("firm", "year"),
           list("firm", c("firm", "year")), "firm", "year", w = "value")
)

# ---- PPML with fixed effects ----------------------------------------------------------------------
ctl <- glm.control(epsilon = 1e-14, maxit = 200)
ppml_case <- function(name, source, d, y, x, fe, clusters, w = NULL) {
  n_all <- nrow(d)
  d$.w <- if (is.null(w)) rep(1, n_all) else d[[w]]
  keep <- rep(TRUE, n_all)
  zero_values <- 0
  for (f in fe) {
    tot <- tapply(d[[y]], d[[f]], sum)
    z <- names(tot)[tot == 0]
    zero_values <- zero_values + length(z)
    keep <- keep & !(as.character(d[[f]]) %in% z)
  }
  used <- d[keep, ]
  n <- nrow(used)
  k <- length(x)
  f <- as.formula(paste(y, "~", paste(c(x, paste0("factor(", fe, ")")), collapse = " + ")))
  m0 <- glm(f, family = quasipoisson, data = used, control = ctl, weights = .w)
  m <- glm(f, family = quasipoisson, data = used, control = ctl, start = coef(m0), weights = .w)
  check(m$converged, paste(name, "glm did not converge"))
  a <- m$rank - k
  b <- coef(m)[x]
  mu <- fitted(m)
  # HC0 by the within formula
  Xf <- model.matrix(m)
  D <- Xf[, !(colnames(Xf) %in% x), drop = FALSE]
  om <- used$.w * mu
  Xt <- sapply(x, function(v) { r <- lm.wfit(D, used[[v]], om); r$residuals })
  Bm <- solve(crossprod(Xt * sqrt(om)))
  V0 <- Bm %*% crossprod(Xt * (used$.w * (used[[y]] - mu))) %*% Bm
  check(close_to(diag(V0), diag(vcovHC(m, type = "HC0"))[x], 1e-8), paste(name, "PPML HC0 by hand"))
  cl_out <- list()
  for (cl in clusters) {
    nested <- fe[vapply(fe, function(ff) any(vapply(cl, function(cc) all(tapply(used[[cc]], used[[ff]], function(v) length(unique(v))) == 1), TRUE)), TRUE)]
    an <- if (length(nested) == 0) 0 else if (length(nested) == 1) length(unique(used[[nested]])) else a
    p <- k + a - an
    V <- vcovCL(m, cluster = as.formula(paste("~", paste(cl, collapse = " + "))), type = "HC0", cadjust = TRUE, multi0 = FALSE) * (n - 1) / (n - p)
    G <- vapply(cl, function(cc) length(unique(used[[cc]])), 1)
    cl_out[[paste(cl, collapse = "+")]] <- list(clusters = cl, codes = lapply(setNames(cl, cl), function(v) codes0(d[[v]])),
      nested_absorbed = scalar(an), p = scalar(p), groups = unname(G), df = scalar(min(G) - 1),
      variance = unname(diag(V)[x]), se = unname(sqrt(pmax(diag(V)[x], 0))))
  }
  list(name = scalar(name), source = scalar(source), rows_given = scalar(n_all), n = scalar(n), k = scalar(k),
       absorbed = scalar(a), all_zero_rows = scalar(n_all - n), all_zero_values = scalar(zero_values),
       y = d[[y]], x = lapply(setNames(x, x), function(v) d[[v]]),
       keys = lapply(setNames(fe, fe), function(v) codes0(d[[v]])),
       weights = if (is.null(w)) NULL else d[[w]],
       coefficients = unname(b), deviance = scalar(deviance(m)),
       se = list(HC0 = unname(sqrt(diag(vcovHC(m, type = "HC0"))[x])), HC1 = unname(sqrt(diag(vcovHC(m, type = "HC1"))[x]))),
       cluster = cl_out, glm_iterations = scalar(m$iter))
}
epil_d <- local({ e <- MASS::epil; data.frame(subject = e$subject, period = e$period, y = e$y, V4 = e$V4) })
ppml_cases <- list(
  ppml_case("grunfeld_ppml_twoway", "plm::Grunfeld", grun, "inv", c("lvalue", "lcapital"), c("firm", "year"), list("firm", "year", c("firm", "year"))),
  ppml_case("grunfeld_ppml_oneway", "plm::Grunfeld", grun, "inv", c("lvalue", "lcapital"), "firm", list("firm", "year")),
  ppml_case("epil_ppml_oneway", "MASS::epil", epil_d, "y", c("V4"), "subject", list("subject")),
  ppml_case("produc_ppml_weighted_twoway", "plm::Produc, weights emp", prod_d, "gsp", c("lpcap", "lpc", "unemp"), c("state", "year"),
            list("state", "region", c("state", "year")), w = "emp")
)

# ---- PREDICT under fixed effects ------------------------------------------------------------------
# predict(lm(y ~ x + factor(key1) [+ factor(key2)]), newdata) and predict(glm(..., quasipoisson),
# newdata, type = "response") at new rows whose key values were seen in the fit; keys are given as
# the codes the cells use (firm: first appearance, year: ascending), x at chosen values.
predict_case <- function(name, source, d, y, x, fe, newdata, ppml = FALSE) {
  f <- as.formula(paste(y, "~", paste(c(x, paste0("factor(", fe, ")")), collapse = " + ")))
  m <- if (ppml) {
    m0 <- glm(f, family = quasipoisson, data = d, control = ctl)
    glm(f, family = quasipoisson, data = d, control = ctl, start = coef(m0))
  } else lm(f, data = d)
  p <- if (ppml) predict(m, newdata = newdata, type = "response") else predict(m, newdata = newdata)
  code_of <- function(v, key) {
    if (key == "year") as.integer(factor(v, levels = sort(unique(d[[key]])))) - 1L
    else as.integer(factor(v, levels = unique(d[[key]]))) - 1L
  }
  list(name = scalar(name), source = scalar(source), ppml = scalar(ppml), y = d[[y]],
       x = lapply(setNames(x, x), function(v) d[[v]]),
       keys = lapply(setNames(fe, fe), function(v) code_of(d[[v]], v)),
       new_x = lapply(setNames(x, x), function(v) newdata[[v]]),
       new_keys = lapply(setNames(fe, fe), function(v) code_of(newdata[[v]], v)),
       predicted = unname(p))
}
grun_new <- data.frame(firm = c(1, 3, 7, 10), year = c(1935, 1940, 1947, 1954),
                       lvalue = c(7.5, 6.0, 5.2, 4.4), lcapital = c(6.0, 4.1, 3.3, 2.0))
predict_cases <- list(
  predict_case("grunfeld_predict_oneway", "plm::Grunfeld", grun, "ly", c("lvalue", "lcapital"), "firm", grun_new),
  predict_case("grunfeld_predict_twoway", "plm::Grunfeld", grun, "ly", c("lvalue", "lcapital"), c("firm", "year"), grun_new),
  predict_case("grunfeld_predict_ppml_oneway", "plm::Grunfeld", grun, "inv", c("lvalue", "lcapital"), "firm", grun_new, ppml = TRUE)
)

# ---- residual tests under fixed effects, and weighted PPML without fixed effects ----------------
# Breusch-Pagan and White on the residuals of lm(y ~ x + factor(g)) with the regressors x (not the
# indicators) as the variance's explanatory variables: lmtest::bptest(m, varformula, data,
# studentize = TRUE | FALSE); White: varformula with squares and cross-products; RESET
# lmtest::resettest(m, power = 2:3, type = "fitted") (the auxiliary regression keeps the indicators);
# Jarque-Bera n/6 (S^2 + (K - 3)^2 / 4) with moments of residuals(m) (n denominators).
suppressPackageStartupMessages(library(lmtest))
tests_case <- function(name, source, d, y, x, fe) {
  f <- as.formula(paste(y, "~", paste(c(x, paste0("factor(", fe, ")")), collapse = " + ")))
  m <- lm(f, data = d)
  vf <- as.formula(paste("~", paste(x, collapse = " + ")))
  sq <- paste0("I(", x, "^2)")
  cr <- combn(x, 2, function(p) paste0("I(", p[1], "*", p[2], ")"))
  wf <- as.formula(paste("~", paste(c(x, sq, cr), collapse = " + ")))
  bp <- bptest(m, vf, data = d)
  bpo <- bptest(m, vf, data = d, studentize = FALSE)
  wh <- bptest(m, wf, data = d)
  rs <- resettest(m, power = 2:3, type = "fitted")
  e <- residuals(m); n <- length(e); e <- e - mean(e)
  S <- mean(e^3) / mean(e^2)^1.5; K <- mean(e^4) / mean(e^2)^2
  jb <- n / 6 * (S^2 + (K - 3)^2 / 4)
  list(name = scalar(name), source = scalar(source), y = d[[y]], x = lapply(setNames(x, x), function(v) d[[v]]),
       keys = lapply(setNames(fe, fe), function(v) codes0(d[[v]])),
       bp = c(unname(bp$statistic), unname(bp$p.value)), bp_original = c(unname(bpo$statistic), unname(bpo$p.value)),
       white = c(unname(wh$statistic), unname(wh$p.value)), reset = c(unname(rs$statistic), unname(rs$p.value)),
       jb = c(jb, pchisq(jb, 2, lower.tail = FALSE)))
}
tests_cases <- list(tests_case("grunfeld_tests_oneway", "plm::Grunfeld", grun, "ly", c("lvalue", "lcapital"), "firm"))
# glm(y ~ x, quasipoisson, weights = w): coefficients, HC0/HC1 (vcovHC), classical (vcov: Pearson
# dispersion with the prior weights), cluster vcovCL(type = "HC1") (G/(G-1) (n-1)/(n-k))
ppml_weighted_plain <- local({
  d <- prod_d
  m0 <- glm(gsp ~ lpcap + lpc + unemp, family = quasipoisson, data = d, weights = emp, control = ctl)
  m <- glm(gsp ~ lpcap + lpc + unemp, family = quasipoisson, data = d, weights = emp, control = ctl, start = coef(m0))
  list(name = scalar("produc_ppml_weighted_plain"), source = scalar("plm::Produc, weights emp"), y = d$gsp,
       x = list(lpcap = d$lpcap, lpc = d$lpc, unemp = d$unemp), weights = d$emp, region = d$region,
       coefficients = unname(coef(m)),
       se = list(HC0 = unname(sqrt(diag(vcovHC(m, type = "HC0")))), HC1 = unname(sqrt(diag(vcovHC(m, type = "HC1")))),
                 classical = unname(sqrt(diag(vcov(m)))),
                 cluster_region = unname(sqrt(diag(vcovCL(m, cluster = ~region, type = "HC1"))))))
})

# classical errors of PPML with fixed effects: sqrt(diag(vcov(glm(y ~ x + factor(g), quasipoisson))))
# (Pearson dispersion on n - rank df)
ppml_classical <- local({
  f <- inv ~ lvalue + lcapital + factor(firm)
  m0 <- glm(f, family = quasipoisson, data = grun, control = ctl)
  m <- glm(f, family = quasipoisson, data = grun, control = ctl, start = coef(m0))
  list(name = scalar("grunfeld_ppml_oneway"), se = unname(sqrt(diag(vcov(m)))[c("lvalue", "lcapital")]),
       dispersion = scalar(summary(m)$dispersion))
})

out <- list(
  generated_by = scalar("Rscript test/reference/scripts/panel.R"),
  r_version = scalar(R.version.string),
  packages = list(sandwich = scalar(as.character(packageVersion("sandwich"))), plm = scalar(as.character(packageVersion("plm"))),
                  estimatr = scalar(as.character(packageVersion("estimatr"))), MASS = scalar(as.character(packageVersion("MASS")))),
  ols = cases,
  ppml = ppml_cases,
  predict = predict_cases,
  tests = tests_cases,
  ppml_weighted_plain = ppml_weighted_plain,
  ppml_classical = ppml_classical
)
writeLines(to_json(out), out_path)
cat("wrote", out_path, "\n")
for (cc in cases) if (!is.null(cc$plm_vcovNW_matches_hac_within)) cat(cc$name, "plm::vcovNW equals HAC within units:", cc$plm_vcovNW_matches_hac_within, "\n")
