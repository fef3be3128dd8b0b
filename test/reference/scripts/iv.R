# Reference values for two-stage least squares (functions/engine/iv.ts) and its checks
# (functions/engine/ivCheck.ts), from R's AER::ivreg with the sandwich package, cross-checked with
# estimatr::iv_robust where its conventions are the same.
#
# Run from the repository root (relative paths only; not run in CI):
#   Rscript test/reference/scripts/iv.R
# writes test/reference/iv.json.
#
# Open datasets shipping with AER (Debian r-cran-aer):
#   cig95        CigarettesSW, year 1995 (48 states): log(packs) ~ log(rprice) + log(rincome) |
#                log(rincome) + tdiff + I(tax/cpi); rprice = price/cpi, rincome = income/population/cpi,
#                tdiff = (taxs - tax)/cpi (sales tax), tax/cpi (cigarette-specific tax). Over-identified.
#   cig95w       the same, weighted by population (ivreg(weights = population)).
#   cigpanel     CigarettesSW, both years (96 rows), y1995 = (year == 1995) exogenous, clustered by state.
#   mroz         PSID1976 participants (428 women with a wage): log(wage) ~ education + experience +
#                I(experience^2) | experience + I(experience^2) + meducation + feducation.
#   mroz_father  log(wage) ~ education | feducation (exactly identified; a textbook example).
#   cig95_noint  cig95 without an intercept (- 1 in both parts of the formula), where AER's Sargan
#                (n times the centred R^2 of e on Z) differs from n e'P_Z e/e'e ("sargan_uncentred").
#   mroz_two     log(wage) ~ education + experience + I(experience^2) with education and experience
#                endogenous, instruments meducation, feducation, heducation, age (a numerical check with
#                two endogenous regressors, not an economic model).
#
# Per case:
#   m <- AER::ivreg(f, data = d [, weights = w])
#   coef(m); classical sqrt(diag(vcov(m))); HC0, HC1 sqrt(diag(sandwich::vcovHC(m, type = ...)));
#   HAC sqrt(diag(sandwich::NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE))),
#     L = floor(4 * (n / 100)^(2 / 9)) (rows in data order);
#   cluster sqrt(diag(sandwich::vcovCL(m, cluster = g, type = "HC1")));
#   summary(m, diagnostics = TRUE)$diagnostics (classical) and
#   summary(m, vcov. = function(x) sandwich::vcovHC(x, type = "HC1"), diagnostics = TRUE)$diagnostics
#   (and vcovCL for the clustered case): rows "Weak instruments", "Wu-Hausman", "Sargan" with df1,
#   df2, statistic, p-value;
#   partial R^2 of the excluded instruments in each first stage: 1 - RSS(x_j ~ Z) / RSS(x_j ~ Z_exog)
#   (lm / lm.wfit);
#   Sargan n e'P_Z e/e'e: n * (1 - RSS(lm.fit(Z, e)) / sum(e^2)) and its chi-square p ("sargan_uncentred");
#   Wu-Hausman regression form: lm(y ~ X + v), v the first-stage residuals: coefficients of v;
#   estimatr::iv_robust(f, data, se_type = "classical" | "HC0" | "HC1" | "CR0" (clusters = g); CR0 is
#   the cluster sandwich without the factor G/(G-1)(n-1)/(n-k)).
#   The data columns exactly as entered in the model (logs taken in R) are written out with the values.
suppressPackageStartupMessages({
  library(AER)
  library(sandwich)
  library(estimatr)
})
source(file.path("test", "reference", "scripts", "json17.R"))
out_path <- file.path("test", "reference", "iv.json")

data("CigarettesSW", package = "AER")
cig <- CigarettesSW
cig$rprice <- cig$price / cig$cpi
cig$rincome <- cig$income / cig$population / cig$cpi
cig$tdiff <- (cig$taxs - cig$tax) / cig$cpi
cig$ctax <- cig$tax / cig$cpi
cig$lpacks <- log(cig$packs)
cig$lrprice <- log(cig$rprice)
cig$lrincome <- log(cig$rincome)
cig$y1995 <- as.numeric(cig$year == "1995")
c95 <- subset(cig, year == "1995")

data("PSID1976", package = "AER")
mz <- subset(PSID1976, participation == "yes")
mz$lwage <- log(mz$wage)
mz$expersq <- mz$experience^2

hc1 <- function(x) sandwich::vcovHC(x, type = "HC1")

diag_rows <- function(dg) {
  lapply(seq_len(nrow(dg)), function(i) list(
    row = scalar(rownames(dg)[i]),
    df1 = scalar(dg[i, 1]), df2 = scalar(dg[i, 2]),
    statistic = scalar(dg[i, 3]), p = scalar(dg[i, 4])))
}

make_case <- function(label, d, yname, xnames, endo, inst, weights = NULL, cluster = NULL, note = "", intercept = TRUE) {
  fx <- paste(c(xnames, if (!intercept) "- 1"), collapse = " + ")
  fz <- paste(c(setdiff(xnames, endo), inst, if (!intercept) "- 1"), collapse = " + ")
  fx <- sub("\\+ - 1", "- 1", fx); fz <- sub("\\+ - 1", "- 1", fz)
  f <- as.formula(paste(yname, "~", fx, "|", fz))
  d$.w <- if (is.null(weights)) rep(1, nrow(d)) else d[[weights]]
  m <- if (is.null(weights)) ivreg(f, data = d) else ivreg(f, data = d, weights = .w)
  n <- nobs(m)
  k <- length(coef(m))
  L <- floor(4 * (n / 100)^(2 / 9))
  se <- list(
    classical = sqrt(diag(vcov(m))),
    HC0 = sqrt(diag(vcovHC(m, type = "HC0"))),
    HC1 = sqrt(diag(vcovHC(m, type = "HC1"))),
    HAC = sqrt(diag(NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE)))
  )
  diag <- list(
    classical = diag_rows(summary(m, diagnostics = TRUE)$diagnostics),
    HC0 = diag_rows(summary(m, vcov. = function(x) sandwich::vcovHC(x, type = "HC0"), diagnostics = TRUE)$diagnostics),
    HC1 = diag_rows(summary(m, vcov. = hc1, diagnostics = TRUE)$diagnostics),
    HAC = diag_rows(summary(m, vcov. = function(x) NeweyWest(x, lag = L, prewhite = FALSE, adjust = FALSE), diagnostics = TRUE)$diagnostics)
  )
  g <- NULL
  if (!is.null(cluster)) {
    g <- as.character(d[[cluster]])
    se$cluster <- sqrt(diag(vcovCL(m, cluster = g, type = "HC1")))
    diag$cluster <- diag_rows(summary(m, vcov. = function(x) vcovCL(x, cluster = g, type = "HC1"), diagnostics = TRUE)$diagnostics)
  }
  # First stages: partial R^2 and the first-stage residuals.
  w <- d$.w
  Z <- model.matrix(m, component = "instruments")
  X <- model.matrix(m, component = "regressors")
  Zexog <- Z[, !(colnames(Z) %in% inst), drop = FALSE]
  partial <- sapply(endo, function(e) {
    ru <- sum(w * lm.wfit(Z, X[, e], w)$residuals^2)
    rr <- sum(w * lm.wfit(Zexog, X[, e], w)$residuals^2)
    1 - ru / rr
  })
  V <- sapply(endo, function(e) lm.wfit(Z, X[, e], w)$residuals)
  # Sargan as n e'P_Z e / e'e (uncentred R^2 of e on Z); equal to AER's centred form with an intercept
  r <- residuals(m) * sqrt(w)
  sargan_uncentred <- n * (1 - sum(lm.fit(Z * sqrt(w), r)$residuals^2) / sum(r^2))
  if (length(inst) == length(endo)) sargan_uncentred <- NA
  aug <- lm.wfit(cbind(X, V), d[[yname]], w)
  wh_coef <- unname(aug$coefficients[(k + 1):(k + length(endo))])
  # estimatr, same conventions (classical e'e/(n-k), HC0, HC1 = n/(n-k) HC0; CR0 = the cluster sandwich
# with no small-sample factor).
  est <- list()
  for (t in c("classical", "HC0", "HC1")) {
    r <- if (is.null(weights)) iv_robust(f, data = d, se_type = t) else iv_robust(f, data = d, weights = .w, se_type = t)
    est[[t]] <- list(coef = unname(coef(r)), se = unname(r$std.error))
  }
  if (!is.null(cluster)) {
    d$.g <- g
    r <- iv_robust(f, data = d, clusters = .g, se_type = "CR0")
    est$CR0 <- list(coef = unname(coef(r)), se = unname(r$std.error))
  }
  s <- summary(m)
  list(
    label = scalar(label),
    note = scalar(note),
    formula = scalar(paste(deparse(f), collapse = " ")),
    n = scalar(n), k = scalar(k),
    intercept = scalar(intercept),
    sargan_uncentred = scalar(sargan_uncentred),
    sargan_uncentred_p = scalar(if (length(inst) > length(endo)) pchisq(sargan_uncentred, length(inst) - length(endo), lower.tail = FALSE) else NA),
    y = unname(d[[yname]]),
    x_names = xnames,
    x = lapply(xnames, function(v) unname(d[[v]])),
    endogenous = endo,
    instrument_names = inst,
    instruments = lapply(inst, function(v) unname(d[[v]])),
    weights = if (is.null(weights)) NULL else unname(d$.w),
    clusters = g,
    terms = names(coef(m)),
    coefficients = unname(coef(m)),
    se = lapply(se, unname),
    hac_lags = scalar(L),
    sigma = scalar(m$sigma),
    rss = scalar(sum(w * residuals(m)^2)),
    resid_head = unname(residuals(m)[1:5]),
    df_residual = scalar(m$df.residual),
    diagnostics = diag,
    partial_r2 = unname(partial),
    wu_hausman_coef = wh_coef,
    estimatr = est,
    r2 = scalar(s$r.squared)
  )
}

cases <- list(
  cig95 = make_case("cig95", c95, "lpacks", c("lrprice", "lrincome"), "lrprice", c("tdiff", "ctax"),
    note = "AER CigarettesSW 1995: log packs on log real price (instrumented by sales tax and cigarette tax) and log real income"),
  cig95w = make_case("cig95w", c95, "lpacks", c("lrprice", "lrincome"), "lrprice", c("tdiff", "ctax"), weights = "population",
    note = "the same, weighted by state population"),
  cigpanel = make_case("cigpanel", cig, "lpacks", c("lrprice", "lrincome", "y1995"), "lrprice", c("tdiff", "ctax"), cluster = "state",
    note = "AER CigarettesSW 1985 and 1995, clustered by state"),
  mroz = make_case("mroz", mz, "lwage", c("education", "experience", "expersq"), "education", c("meducation", "feducation"),
    note = "AER PSID1976 participants: log wage on education (instrumented by parents' education), experience and its square"),
  mroz_father = make_case("mroz_father", mz, "lwage", c("education"), "education", c("feducation"),
    note = "AER PSID1976 participants: log wage on education instrumented by father's education"),
  cig95_noint = make_case("cig95_noint", c95, "lpacks", c("lrprice", "lrincome"), "lrprice", c("tdiff", "ctax"), intercept = FALSE,
    note = "the 1995 cross-section without an intercept (ivreg with - 1 in both parts): where AER's centred Sargan differs"),
  mroz_two = make_case("mroz_two", mz, "lwage", c("education", "experience", "expersq"), c("education", "experience"),
    c("meducation", "feducation", "heducation", "age"),
    note = "numerical check with two endogenous regressors")
)

# Fixed effects and clustered errors (the cells' absorb=State; cluster=State): state indicators in
# both parts of the formula, clustered by state. The state effects are nested within the clusters, so
# the cluster factor is G/(G-1)(n-1)/(n-p) with p = the slopes only (k + a - a_n, a_n = a):
#   vcovCL(m, cluster = g, type = "HC0", cadjust = TRUE) * (n - 1) / (n - p), p = length(coef) - a,
# the same function for the auxiliary regressions of the diagnostics (p their own slopes).
fe_case <- function(weighted = FALSE) {
  d <- cig
  d$state <- factor(as.character(d$state))
  d$.w <- if (weighted) d$population else rep(1, nrow(d))
  f <- lpacks ~ lrprice + lrincome + y1995 + state | lrincome + y1995 + state + tdiff + ctax
  m <- if (weighted) ivreg(f, data = d, weights = .w) else ivreg(f, data = d)
  n <- nobs(m)
  a <- nlevels(d$state)
  g <- as.character(d$state)
  cl <- function(x) vcovCL(x, cluster = g, type = "HC0", cadjust = TRUE) * (n - 1) / (n - (length(coef(x)) - a))
  slopes <- c("lrprice", "lrincome", "y1995")
  fs <- lm(lrprice ~ lrincome + y1995 + state + tdiff + ctax, data = d, weights = .w)
  wald <- function(fit, idx) {
    b <- coef(fit)[idx]
    as.numeric(t(b) %*% solve(cl(fit)[idx, idx, drop = FALSE]) %*% b) / length(idx)
  }
  d$v <- residuals(fs)
  wh <- lm(lpacks ~ lrprice + lrincome + y1995 + state + v, data = d, weights = .w)
  f1 <- wald(fs, c("tdiff", "ctax"))
  f2 <- wald(wh, "v")
  cluster_diag <- list(
    list(row = scalar("Weak instruments"), df1 = scalar(2), df2 = scalar(fs$df.residual), statistic = scalar(f1), p = scalar(pf(f1, 2, fs$df.residual, lower.tail = FALSE))),
    list(row = scalar("Wu-Hausman"), df1 = scalar(1), df2 = scalar(wh$df.residual), statistic = scalar(f2), p = scalar(pf(f2, 1, wh$df.residual, lower.tail = FALSE))))
  pick <- function(V) unname(sqrt(diag(V))[slopes])
  list(
    note = scalar(paste0("AER CigarettesSW 1985 and 1995 with state fixed effects (factor(state) in both parts), clustered by state", if (weighted) ", weighted by population" else "")),
    weights = if (weighted) unname(d$population) else NULL,
    formula = scalar(paste(deparse(f), collapse = " ")),
    n = scalar(n), absorbed = scalar(a),
    y = unname(d$lpacks),
    x_names = slopes,
    x = lapply(slopes, function(v) unname(d[[v]])),
    instrument_names = c("tdiff", "ctax"),
    instruments = lapply(c("tdiff", "ctax"), function(v) unname(d[[v]])),
    state = g,
    coefficients = unname(coef(m)[slopes]),
    se = list(classical = pick(vcov(m)), HC1 = pick(vcovHC(m, type = "HC1")), cluster = pick(cl(m))),
    diagnostics = list(
      classical = diag_rows(summary(m, diagnostics = TRUE)$diagnostics),
      HC1 = diag_rows(summary(m, vcov. = hc1, diagnostics = TRUE)$diagnostics),
      # AER's linearHypothesis refuses the full clustered covariance of the indicator regressions
      # (singular in the indicators' directions), so the two Wald F are formed here on the
      # instruments' (or v's) block of vcovCL of the same auxiliary lm fits
      cluster = cluster_diag
    ),
    sigma = scalar(m$sigma),
    r2 = scalar(summary(m)$r.squared)
  )
}
absorbed_cases <- list(cigpanel_fe = fe_case(), cigpanel_fe_w = fe_case(weighted = TRUE))

# The textbook example's first stage and OLS, for the printed digits.
fs_f <- lm(education ~ feducation, data = mz)
ols_f <- lm(lwage ~ education, data = mz)
textbook <- list(
  first_stage_coef = unname(coef(fs_f)),
  first_stage_se = unname(sqrt(diag(vcov(fs_f)))),
  first_stage_r2 = scalar(summary(fs_f)$r.squared),
  ols_coef = unname(coef(ols_f)),
  ols_se = unname(sqrt(diag(vcov(ols_f))))
)

result <- list(
  source = scalar("R AER::ivreg with sandwich (vcovHC, vcovCL, NeweyWest) and estimatr::iv_robust; generated by test/reference/scripts/iv.R (run from the repository root)"),
  r_version = scalar(R.version.string),
  packages = list(
    AER = scalar(as.character(packageVersion("AER"))),
    sandwich = scalar(as.character(packageVersion("sandwich"))),
    estimatr = scalar(as.character(packageVersion("estimatr"))),
    lmtest = scalar(as.character(packageVersion("lmtest")))
  ),
  commands = list(
    fit = scalar("m <- AER::ivreg(y ~ x | exogenous x + instruments, data = d [, weights = w]); coef(m)"),
    se = scalar("sqrt(diag(vcov(m))); sqrt(diag(sandwich::vcovHC(m, type = 'HC0' | 'HC1'))); sqrt(diag(sandwich::NeweyWest(m, lag = floor(4 * (n / 100)^(2 / 9)), prewhite = FALSE, adjust = FALSE))); sqrt(diag(sandwich::vcovCL(m, cluster = g, type = 'HC1')))"),
    diagnostics = scalar("summary(m, diagnostics = TRUE)$diagnostics; summary(m, vcov. = function(x) sandwich::vcovHC(x, type = 'HC0' | 'HC1') | NeweyWest(...) | vcovCL(x, cluster = g, type = 'HC1'), diagnostics = TRUE)$diagnostics"),
    partial_r2 = scalar("1 - sum(w * lm.wfit(Z, x_j, w)$residuals^2) / sum(w * lm.wfit(Z_exog, x_j, w)$residuals^2)"),
    wu_hausman_coef = scalar("lm.wfit(cbind(X, V), y, w)$coefficients of V, V the first-stage residuals"),
    estimatr = scalar("estimatr::iv_robust(f, data = d, se_type = 'classical' | 'HC0' | 'HC1'); se_type = 'CR0' with clusters = g"),
    textbook = scalar("lm(education ~ feducation, data = mz); lm(lwage ~ education, data = mz)"),
    absorbed = scalar("ivreg(lpacks ~ lrprice + lrincome + y1995 + state | lrincome + y1995 + state + tdiff + ctax, data = cig); vcovCL(m, cluster = g, type = 'HC0', cadjust = TRUE) * (n - 1) / (n - (length(coef(m)) - a)); summary(m, vcov. = <the same>, diagnostics = TRUE)")
  ),
  cases = cases,
  absorbed = absorbed_cases,
  textbook = textbook
)
writeLines(to_json(result), out_path)
cat("wrote", out_path, "\n")
for (nm in names(cases)) {
  cs <- cases[[nm]]
  cat(nm, "n =", cs$n, "coef =", format(cs$coefficients, digits = 6), "\n")
  # estimatr agrees with ivreg
  for (t in names(cs$estimatr)) {
    G <- length(unique(cs$clusters))
    ref <- if (t == "CR0") cs$se$cluster * sqrt((G - 1) / G * (cs$n - cs$k) / (cs$n - 1)) else cs$se[[t]]
    cat("  estimatr", t, "max rel diff coef", max(abs(cs$estimatr[[t]]$coef / cs$coefficients - 1)),
        "se", max(abs(cs$estimatr[[t]]$se / ref - 1)), "\n")
  }
}
