# Reference values for PPML (estimator=ppml), the shift and inverse-hyperbolic-sine fits
# with their elasticities (zeros=shift, zeros=ihs), the SUMMARY "PPML contrast" and one ELX.BYGROUP
# group, from R's stats package (glm with family = quasipoisson, lm) and the sandwich and lmtest
# packages.
#
# Run from the repository root (relative paths only; not run in CI):
#   Rscript test/reference/scripts/ppml.R
# writes test/reference/ppml.json.
#
# Open datasets with many zeros in y (each ships with R or with a Debian r-cran-* package):
#   ships        MASS::ships (McCullagh and Nelder 1989): incidents ~ log(service) + year + period75
#                + typeB..typeE; the 6 rows with service = 0 are left out (zeros=drop on the logged
#                service column); 8 of the 34 rows used have incidents = 0. year (60, 65, 70, 75) is
#                kept in levels (levels=year); period75 = (period == 75) and the type dummies are 0/1.
#   bioChemists  pscl::bioChemists (Long 1990; Debian r-cran-pscl): art ~ fem + mar + kid5 + log(phd)
#                + ment, 275 of 915 zeros in art; fem = (fem == "Women"), mar = (mar == "Married");
#                kid5 and ment kept in levels (levels=kid5,ment).
#   esoph        datasets::esoph: ncases ~ log(ncontrols) + age + alcohol + tobacco with the ordered
#                groups as scores 1..6, 1..4, 1..4 in levels; rows with ncontrols = 0 left out
#                (zeros=drop); 29 of the 88 rows have ncases = 0.
#   bioChemists  again, form=log-level (every x in levels).
#
# PPML, for each case (formula stored as "formula"):
#   ctl <- glm.control(epsilon = 1e-14, maxit = 200)
#   m0  <- glm(formula, family = quasipoisson, data = used, control = ctl)
#   m   <- glm(formula, family = quasipoisson, data = used, control = ctl, start = coef(m0))
#   (R's glm keeps the weights of its second-to-last iteration; the refit from the converged
#   coefficients makes the weights those of the estimate: the difference it makes to the HC1 errors
#   is recorded as "refit_se_change")
#   coefficients coef(m); HC0, HC1 sqrt(diag(sandwich::vcovHC(m, type = "HC0" | "HC1"))) (HC0 also
#   checked against (X'WX)^-1 X' diag((y - mu)^2) X (X'WX)^-1 written out); classical
#   sqrt(diag(vcov(m))) (= Pearson dispersion * (X'WX)^-1); z = b / se; p = 2 * pnorm(-abs(z));
#   intervals b -/+ qnorm((1 + level) / 2) * se; deviance(m); pseudo R^2 cor(y, fitted(m))^2;
#   Pearson dispersion sum(residuals(m, "pearson")^2) / df.residual(m) (= summary(m)$dispersion);
#   elasticities: b for a logged x, b * mean(x) (or median) of the rows used for a level x;
#   se = |factor| * se(b), interval = sort(factor * interval of b); percent effects of level x:
#   100 * expm1(b), Kennedy (1981) 100 * expm1(b - se^2 / 2), 100 * expm1(interval ends);
#   predictions at new rows: x0 <- model.matrix(delete.response(terms(m)), newx); eta = x0 b;
#   se = sqrt(diag(x0 V x0')); exp(eta), exp(eta -/+ qnorm((1 + level) / 2) * se) (classical se
#   checked against predict(m, newx, type = "link", se.fit = TRUE)$se.fit).
#
# Existence (Santos Silva and Tenreyro 2010, Economics Letters 107): bioChemists with an added column
#   sep_one  = 1 on every third row where art = 0 (from the first), 0 elsewhere: zero wherever art > 0
#              and of one sign where art = 0: the estimates do not exist (no R number: glm drifts);
#   sep_both = 0 wherever art > 0; on the rows where art = 0, in turn +1, 0, -1, 0: both signs, the
#              estimates exist; fitted like the other PPML cases (R's numbers recorded).
#
# Shift and IHS (OLS on transformed y; x logged unless binary or in levels=; a logged x column with
# zeros gets the same transform as y, the others keep the plain log):
#   m <- lm(log(art + c) ~ fem + mar + kid5 + log(phd) + log(ment + c), data = bioChemists), c = 1, 0.5
#   m <- lm(asinh(art) ~ fem + mar + kid5 + log(phd) + asinh(ment), data = bioChemists)
#   m <- lm(log(art + 1) ~ fem + mar + kid5 + log(phd) + ment, ...)   (ment in levels)
#   classical sqrt(diag(vcov(m))), HC0..HC3 sqrt(diag(sandwich::vcovHC(m, type = ...)));
#   t, p with df.residual(m); intervals with qt; summary(m)$r.squared, $sigma;
#   elasticity = b * h'(x)x / (g'(y)y) at the means (or medians) of the rows used in original
#   units, with g'(y)y = y / (y + c) for log(y + c), y / sqrt(y^2 + 1) for asinh(y) (Bellemare and
#   Wichman 2020), h'(x)x = 1 (log x), x (level), x / (x + c) (log(x + c)), x / sqrt(x^2 + 1) (asinh x).
#
# PPML contrast (SUMMARY of the OLS log-log fit with zeros=drop): bioChemists log(art) ~ fem + mar +
#   kid5 + log(phd) + ment on the art > 0 rows (HC3 elasticity intervals, t with n - k df) against
#   the PPML elasticities (HC1) on all 915 rows; the terms whose PPML elasticity is outside the OLS
#   interval are listed.
#
# BYGROUP, one group by hand: datasets::CO2, Plant "Qn1": lm(log(uptake) ~ log(conc)) with
#   sandwich HC3, summary(m)$r.squared, lmtest::bptest(m)$p.value; and the PPML fit
#   glm(uptake ~ log(conc), quasipoisson) (refit as above) with HC1 and cor(y, fitted)^2.
#
# Every number is printed with sprintf("%.17g") by the small writer below: jsonlite's
# toJSON(digits = NA) prints only 15 significant digits, which would round the references.

suppressPackageStartupMessages({
  library(sandwich)
  library(lmtest)
  library(MASS)
  library(pscl)
})

out_path <- file.path("test", "reference", "ppml.json")
if (!dir.exists(dirname(out_path))) {
  stop("run this script from the repository root: Rscript test/reference/scripts/ppml.R")
}

# ---- a JSON writer that keeps all 17 significant digits -------------------------------------
source(file.path("test", "reference", "scripts", "json17.R"))  # json_num, json_str, to_json, scalar
check <- function(ok, what) if (!isTRUE(ok)) stop(paste(what, ":", paste(ok, collapse = " ")))

# ---- datasets ----------------------------------------------------------------------------------
ships_d <- local({
  s <- MASS::ships
  data.frame(
    incidents = as.numeric(s$incidents), service = as.numeric(s$service),
    year = as.numeric(s$year), period75 = as.numeric(s$period == 75),
    typeB = as.numeric(s$type == "B"), typeC = as.numeric(s$type == "C"),
    typeD = as.numeric(s$type == "D"), typeE = as.numeric(s$type == "E")
  )
})
bio_d <- local({
  b <- pscl::bioChemists
  data.frame(
    art = as.numeric(b$art), fem = as.numeric(b$fem == "Women"), mar = as.numeric(b$mar == "Married"),
    kid5 = as.numeric(b$kid5), phd = as.numeric(b$phd), ment = as.numeric(b$ment)
  )
})
# existence-check columns (see the header)
zero_rows <- which(bio_d$art == 0)
bio_d$sep_one <- 0
bio_d$sep_one[zero_rows[seq(1, length(zero_rows), by = 3)]] <- 1
bio_d$sep_both <- 0
bio_d$sep_both[zero_rows] <- rep_len(c(1, 0, -1, 0), length(zero_rows))
esoph_d <- local({
  e <- datasets::esoph
  data.frame(
    ncases = as.numeric(e$ncases), ncontrols = as.numeric(e$ncontrols),
    age = as.numeric(e$agegp), alcohol = as.numeric(e$alcgp), tobacco = as.numeric(e$tobgp)
  )
})

is_binary <- function(v) all(v %in% c(0, 1))
levels_ci <- c(ci95 = 0.95, ci90 = 0.90)
ctl <- glm.control(epsilon = 1e-14, maxit = 200)

# ---- PPML --------------------------------------------------------------------------------------
ppml_case <- function(data, y, x, logged, options, newx, source) {
  raw <- data[, c(y, x)]
  keep <- rep(TRUE, nrow(raw))
  for (v in x[logged]) keep <- keep & raw[[v]] > 0        # zeros=drop on the logged x columns
  used <- raw[keep, , drop = FALSE]
  n <- nrow(used)
  binary <- vapply(x, function(v) is_binary(used[[v]]), TRUE)
  rhs <- ifelse(logged, paste0("log(", x, ")"), x)
  f <- as.formula(paste(y, "~", paste(rhs, collapse = " + ")))
  m0 <- glm(f, family = quasipoisson, data = used, control = ctl)
  m <- glm(f, family = quasipoisson, data = used, control = ctl, start = coef(m0))
  check(m$converged, "glm did not converge")
  b <- coef(m)
  k <- length(b)
  X <- model.matrix(m)
  mu <- fitted(m)
  yv <- used[[y]]
  V <- list(HC0 = vcovHC(m, type = "HC0"), HC1 = vcovHC(m, type = "HC1"), classical = vcov(m))
  bread <- solve(crossprod(X, X * mu))
  hc0 <- bread %*% crossprod(X * (yv - mu)) %*% bread
  check(all.equal(unname(hc0), unname(V$HC0), tolerance = 1e-10), "HC0 formula")
  check(all.equal(unname(V$HC1), unname(V$HC0) * n / (n - k), tolerance = 1e-10), "HC1 = HC0 n/(n-k)")
  disp <- sum(residuals(m, type = "pearson")^2) / df.residual(m)
  check(all.equal(disp, summary(m)$dispersion, tolerance = 1e-13), "dispersion")
  check(all.equal(unname(V$classical), unname(disp * bread), tolerance = 1e-9), "classical")
  se <- lapply(V, function(v) unname(sqrt(diag(v))))
  se_m0 <- unname(sqrt(diag(vcovHC(m0, type = "HC1"))))
  refit_change <- max(abs(se_m0 - se$HC1) / se$HC1)
  z <- lapply(se, function(s) unname(b / s))
  p <- lapply(z, function(t) 2 * pnorm(-abs(t)))
  ci <- lapply(levels_ci, function(lev) {
    crit <- qnorm((1 + lev) / 2)
    lapply(se, function(s) list(lower = unname(b - crit * s), upper = unname(b + crit * s)))
  })
  slope <- seq_along(x) + 1
  bx <- unname(b[slope])
  elasticities <- lapply(c(mean = "mean", median = "median"), function(at) {
    centre <- function(v) if (at == "mean") mean(v) else median(v)
    xc <- vapply(x, function(v) centre(used[[v]]), 0)
    fac <- unname(ifelse(logged, 1, xc))
    fac[binary] <- NA
    list(
      centre_x = unname(xc),
      factor = fac,
      estimate = fac * bx,
      se = lapply(se, function(s) abs(fac) * s[slope]),
      intervals = lapply(names(levels_ci), function(nm) lapply(names(se), function(st) {
        lo <- fac * ci[[nm]][[st]]$lower[slope]
        hi <- fac * ci[[nm]][[st]]$upper[slope]
        list(lower = pmin(lo, hi), upper = pmax(lo, hi))
      }) |> setNames(names(se))) |> setNames(names(levels_ci))
    )
  })
  lev_idx <- which(!logged)
  effects <- list(
    terms = x[lev_idx],
    percent = 100 * expm1(bx[lev_idx]),
    corrected = lapply(se, function(s) 100 * expm1(bx[lev_idx] - s[slope][lev_idx]^2 / 2)),
    intervals = lapply(names(levels_ci), function(nm) lapply(names(se), function(st) list(
      lower = 100 * expm1(ci[[nm]][[st]]$lower[slope][lev_idx]),
      upper = 100 * expm1(ci[[nm]][[st]]$upper[slope][lev_idx])
    )) |> setNames(names(se))) |> setNames(names(levels_ci))
  )
  x0 <- model.matrix(delete.response(terms(m)), newx)
  eta <- as.vector(x0 %*% b)
  pr <- predict(m, newdata = newx, type = "link", se.fit = TRUE)
  check(all.equal(unname(pr$fit), eta, tolerance = 1e-12), "predict fit")
  check(all.equal(unname(pr$se.fit), unname(sqrt(rowSums((x0 %*% V$classical) * x0))), tolerance = 1e-10), "predict se")
  predictions <- lapply(names(levels_ci), function(nm) {
    crit <- qnorm((1 + levels_ci[[nm]]) / 2)
    lapply(V, function(v) {
      s <- sqrt(rowSums((x0 %*% v) * x0))
      list(fit = exp(eta), lower = exp(eta - crit * s), upper = exp(eta + crit * s))
    })
  }) |> setNames(names(levels_ci))
  cols <- lapply(c(y, x), function(v) as.numeric(raw[[v]]))
  names(cols) <- c(y, x)
  list(
    source = scalar(source),
    options = scalar(options),
    y = scalar(y),
    x = x,
    data = cols,
    rows = scalar(nrow(raw)),
    rows_dropped = scalar(sum(!keep)),
    formula = scalar(deparse1(f)),
    command = scalar(paste0("glm(", deparse1(f), ", family = quasipoisson, data = used, control = glm.control(epsilon = 1e-14, maxit = 200), start = coef(m0))")),
    n = scalar(n),
    k = scalar(k),
    zeros = scalar(sum(yv == 0)),
    terms = c("(Intercept)", x),
    transforms = c("constant", ifelse(logged, "log", "level")),
    binary = unname(binary),
    coefficients = unname(b),
    se = se,
    z = z,
    p = p,
    intervals = ci,
    deviance = scalar(deviance(m)),
    pseudo_r2 = scalar(cor(yv, mu)^2),
    dispersion = scalar(disp),
    r_iterations = scalar(m0$iter),
    refit_se_change = scalar(refit_change),
    elasticities = elasticities,
    effects = effects,
    new_x = lapply(x, function(v) as.numeric(newx[[v]])) |> setNames(x),
    predict = predictions
  )
}

ppml_cases <- list(
  ships = ppml_case(ships_d, "incidents",
    c("service", "year", "period75", "typeB", "typeC", "typeD", "typeE"),
    c(TRUE, FALSE, FALSE, FALSE, FALSE, FALSE, FALSE),
    "estimator=ppml; form=log-log; levels=year; zeros=drop",
    data.frame(service = c(500, 2000, 20000), year = c(60, 70, 75), period75 = c(0, 1, 1),
               typeB = c(0, 1, 0), typeC = c(0, 0, 0), typeD = c(1, 0, 0), typeE = c(0, 0, 1)),
    "MASS::ships"),
  bioChemists = ppml_case(bio_d, "art", c("fem", "mar", "kid5", "phd", "ment"),
    c(FALSE, FALSE, FALSE, TRUE, FALSE),
    "estimator=ppml; form=log-log; levels=kid5,ment",
    data.frame(fem = c(0, 1, 1), mar = c(1, 0, 1), kid5 = c(0, 0, 2), phd = c(1.5, 3.2, 4.5), ment = c(2, 10, 40)),
    "pscl::bioChemists"),
  esoph = ppml_case(esoph_d, "ncases", c("ncontrols", "age", "alcohol", "tobacco"),
    c(TRUE, FALSE, FALSE, FALSE),
    "estimator=ppml; form=log-log; levels=age,alcohol,tobacco; zeros=drop",
    data.frame(ncontrols = c(5, 20, 60), age = c(2, 4, 6), alcohol = c(1, 3, 4), tobacco = c(1, 2, 4)),
    "datasets::esoph"),
  bioChemists_loglevel = ppml_case(bio_d, "art", c("fem", "mar", "kid5", "phd", "ment"),
    c(FALSE, FALSE, FALSE, FALSE, FALSE),
    "estimator=ppml; form=log-level",
    data.frame(fem = c(0, 1, 1), mar = c(1, 0, 1), kid5 = c(0, 0, 2), phd = c(1.5, 3.2, 4.5), ment = c(2, 10, 40)),
    "pscl::bioChemists"),
  bioChemists_sep_both = ppml_case(bio_d, "art", c("fem", "mar", "kid5", "phd", "ment", "sep_both"),
    c(FALSE, FALSE, FALSE, TRUE, FALSE, FALSE),
    "estimator=ppml; form=log-log; levels=kid5,ment,sep_both",
    data.frame(fem = c(0, 1), mar = c(1, 0), kid5 = c(0, 1), phd = c(2, 4), ment = c(5, 20), sep_both = c(0, 0)),
    "pscl::bioChemists with the constructed column sep_both (see the script header)")
)

existence <- list(
  source = scalar("pscl::bioChemists with the constructed column sep_one (see the script header)"),
  y = scalar("art"),
  x = c("fem", "mar", "kid5", "phd", "ment", "sep_one"),
  options = scalar("estimator=ppml; form=log-log; levels=kid5,ment"),
  sep_one = bio_d$sep_one,
  sep_one_nonzero_rows = which(bio_d$sep_one != 0),
  art_positive_where_sep_one_nonzero = scalar(sum(bio_d$art[bio_d$sep_one != 0] > 0))
)

# ---- shift and IHS -------------------------------------------------------------------------------
tr_label <- function(kind, c) switch(kind, log = "log", level = "level", shift = paste0("log(v+", c, ")"), asinh = "asinh")
tr_expr <- function(kind, v, c) switch(kind, log = paste0("log(", v, ")"), level = v,
  shift = paste0("log(", v, " + ", c, ")"), asinh = paste0("asinh(", v, ")"))
rel_slope <- function(kind, v, c) switch(kind, log = 1, level = v, shift = v / (v + c), asinh = v / sqrt(v^2 + 1))

shift_case <- function(data, y, x, logged, zeros, c, options) {
  used <- data[, c(y, x)]
  n <- nrow(used)
  binary <- vapply(x, function(v) is_binary(used[[v]]), TRUE)
  zt <- if (zeros == "ihs") "asinh" else "shift"
  ykind <- if (any(used[[y]] <= 0)) zt else "log"
  xkind <- vapply(seq_along(x), function(j) {
    if (!logged[j]) "level" else if (any(used[[x[j]]] <= 0)) zt else "log"
  }, "")
  f <- as.formula(paste(tr_expr(ykind, y, c), "~", paste(vapply(seq_along(x), function(j) tr_expr(xkind[j], x[j], c), ""), collapse = " + ")))
  m <- lm(f, data = used)
  b <- coef(m)
  k <- length(b)
  df_res <- df.residual(m)
  V <- list(classical = vcov(m), HC0 = vcovHC(m, type = "HC0"), HC1 = vcovHC(m, type = "HC1"),
            HC2 = vcovHC(m, type = "HC2"), HC3 = vcovHC(m, type = "HC3"))
  se <- lapply(V, function(v) unname(sqrt(diag(v))))
  tv <- lapply(se, function(s) unname(b / s))
  p <- lapply(tv, function(t) 2 * pt(-abs(t), df_res))
  ci <- lapply(levels_ci, function(lev) {
    crit <- qt((1 + lev) / 2, df_res)
    lapply(se, function(s) list(lower = unname(b - crit * s), upper = unname(b + crit * s)))
  })
  slope <- seq_along(x) + 1
  bx <- unname(b[slope])
  elasticities <- lapply(c(mean = "mean", median = "median"), function(at) {
    centre <- function(v) if (at == "mean") mean(v) else median(v)
    yc <- centre(used[[y]])
    xc <- vapply(x, function(v) centre(used[[v]]), 0)
    num <- vapply(seq_along(x), function(j) rel_slope(xkind[j], xc[[j]], c), 0)
    fac <- num / rel_slope(ykind, yc, c)
    fac[binary] <- NA
    list(
      centre_y = scalar(yc),
      centre_x = unname(xc),
      factor = fac,
      estimate = fac * bx,
      se = lapply(se, function(s) abs(fac) * s[slope]),
      intervals = lapply(names(levels_ci), function(nm) lapply(names(se), function(st) {
        lo <- fac * ci[[nm]][[st]]$lower[slope]
        hi <- fac * ci[[nm]][[st]]$upper[slope]
        list(lower = pmin(lo, hi), upper = pmax(lo, hi))
      }) |> setNames(names(se))) |> setNames(names(levels_ci))
    )
  })
  sm <- summary(m)
  list(
    source = scalar("pscl::bioChemists"),
    options = scalar(options),
    y = scalar(y),
    x = x,
    formula = scalar(deparse1(f)),
    command = scalar(paste0("lm(", deparse1(f), ", data = bioChemists)")),
    n = scalar(n),
    k = scalar(k),
    y_transform = scalar(tr_label(ykind, c)),
    terms = c("(Intercept)", x),
    transforms = c("constant", vapply(xkind, tr_label, "", c = c)),
    binary = unname(binary),
    coefficients = unname(b),
    se = se,
    t = tv,
    p = p,
    intervals = ci,
    r_squared = scalar(sm$r.squared),
    sigma = scalar(sm$sigma),
    elasticities = elasticities
  )
}

bio_x <- c("fem", "mar", "kid5", "phd", "ment")
shift_cases <- list(
  shift1 = shift_case(bio_d, "art", bio_x, c(FALSE, FALSE, FALSE, TRUE, TRUE), "shift", 1,
                      "form=log-log; levels=kid5; zeros=shift"),
  shift05 = shift_case(bio_d, "art", bio_x, c(FALSE, FALSE, FALSE, TRUE, TRUE), "shift", 0.5,
                       "form=log-log; levels=kid5; zeros=shift; shift=0.5"),
  ihs = shift_case(bio_d, "art", bio_x, c(FALSE, FALSE, FALSE, TRUE, TRUE), "ihs", 1,
                   "form=log-log; levels=kid5; zeros=ihs"),
  shift1_ment_level = shift_case(bio_d, "art", bio_x, c(FALSE, FALSE, FALSE, TRUE, FALSE), "shift", 1,
                                 "form=log-log; levels=kid5,ment; zeros=shift"),
  ihs_ment_level = shift_case(bio_d, "art", bio_x, c(FALSE, FALSE, FALSE, TRUE, FALSE), "ihs", 1,
                              "form=log-log; levels=kid5,ment; zeros=ihs")
)

# ---- PPML contrast ---------------------------------------------------------------------------------
contrast <- local({
  pos <- bio_d[bio_d$art > 0, ]
  m <- lm(log(art) ~ fem + mar + kid5 + log(phd) + ment, data = pos)
  s <- sqrt(diag(vcovHC(m, type = "HC3")))
  crit <- qt(0.975, df.residual(m))
  pp <- ppml_cases$bioChemists
  terms <- c("kid5", "phd", "ment")
  out <- lapply(terms, function(v) {
    fac_ols <- if (v == "phd") 1 else mean(pos[[v]])
    j <- match(v, bio_x)
    bo <- coef(m)[j + 1]
    lo <- fac_ols * (bo - crit * s[j + 1]); hi <- fac_ols * (bo + crit * s[j + 1])
    e_ppml <- pp$elasticities$mean$estimate[j]
    list(term = scalar(v), ols = scalar(unname(fac_ols * bo)), lower = scalar(unname(min(lo, hi))),
         upper = scalar(unname(max(lo, hi))), ppml = scalar(e_ppml),
         outside = scalar(unname(e_ppml < min(lo, hi) || e_ppml > max(lo, hi))))
  })
  list(
    source = scalar("pscl::bioChemists"),
    options = scalar("form=log-log; levels=kid5,ment; zeros=drop"),
    command = scalar("lm(log(art) ~ fem + mar + kid5 + log(phd) + ment, data = subset(bioChemists, art > 0)) with sandwich HC3 and qt(0.975, df.residual); PPML elasticities of the bioChemists case (HC1)"),
    rows_lost = scalar(sum(bio_d$art <= 0)),
    n_ols = scalar(nobs(m)),
    terms = setNames(out, terms)
  )
})

# ---- one BYGROUP group by hand ---------------------------------------------------------------------
co2 <- datasets::CO2
bygroup <- local({
  g <- co2[co2$Plant == "Qn1", ]
  m <- lm(log(uptake) ~ log(conc), data = g)
  mp0 <- glm(uptake ~ log(conc), family = quasipoisson, data = g, control = ctl)
  mp <- glm(uptake ~ log(conc), family = quasipoisson, data = g, control = ctl, start = coef(mp0))
  list(
    source = scalar("datasets::CO2"),
    keys = as.character(co2$Plant),
    uptake = as.numeric(co2$uptake),
    conc = as.numeric(co2$conc),
    group = scalar("Qn1"),
    ols = list(
      command = scalar("m <- lm(log(uptake) ~ log(conc), data = subset(CO2, Plant == 'Qn1')); sqrt(diag(sandwich::vcovHC(m, type = 'HC3'))); summary(m)$r.squared; lmtest::bptest(m)$p.value"),
      n = scalar(nobs(m)),
      elasticity = scalar(unname(coef(m)[2])),
      se_hc3 = scalar(unname(sqrt(diag(vcovHC(m, type = "HC3")))[2])),
      r_squared = scalar(summary(m)$r.squared),
      bp_p = scalar(unname(bptest(m)$p.value))
    ),
    ppml = list(
      command = scalar("glm(uptake ~ log(conc), family = quasipoisson, data = subset(CO2, Plant == 'Qn1'), control = glm.control(epsilon = 1e-14, maxit = 200), start = coef(m0)); sandwich::vcovHC(m, type = 'HC1'); cor(uptake, fitted(m))^2"),
      elasticity = scalar(unname(coef(mp)[2])),
      se_hc1 = scalar(unname(sqrt(diag(vcovHC(mp, type = "HC1")))[2])),
      pseudo_r2 = scalar(cor(g$uptake, fitted(mp))^2)
    ),
    orange = list(
      source = scalar("datasets::Orange"),
      tree = as.numeric(as.character(datasets::Orange$Tree)),
      age = as.numeric(datasets::Orange$age),
      circumference = as.numeric(datasets::Orange$circumference)
    )
  )
})

result <- list(
  source = scalar("R stats::glm (quasipoisson) and stats::lm with sandwich and lmtest; generated by test/reference/scripts/ppml.R (run from the repository root)"),
  r_version = scalar(R.version.string),
  packages = list(
    stats = scalar(as.character(packageVersion("stats"))),
    sandwich = scalar(as.character(packageVersion("sandwich"))),
    lmtest = scalar(as.character(packageVersion("lmtest"))),
    MASS = scalar(as.character(packageVersion("MASS"))),
    pscl = scalar(as.character(packageVersion("pscl"))),
    datasets = scalar(as.character(packageVersion("datasets")))
  ),
  commands = list(
    ppml = scalar("m0 <- glm(f, family = quasipoisson, data = used, control = glm.control(epsilon = 1e-14, maxit = 200)); m <- glm(f, family = quasipoisson, data = used, control = same, start = coef(m0))"),
    ppml_se = scalar("HC0, HC1: sqrt(diag(sandwich::vcovHC(m, type = 'HC0' | 'HC1'))); classical: sqrt(diag(vcov(m)))"),
    ppml_z = scalar("z = b / se; p = 2 * pnorm(-abs(z)); b -/+ qnorm((1 + level) / 2) * se"),
    ppml_stats = scalar("deviance(m); cor(y, fitted(m))^2; sum(residuals(m, 'pearson')^2) / df.residual(m)"),
    ppml_predict = scalar("x0 <- model.matrix(delete.response(terms(m)), newx); exp(x0 %*% b); exp(x0 %*% b -/+ qnorm((1 + level) / 2) * sqrt(diag(x0 %*% V %*% t(x0))))"),
    shift = scalar("lm(log(y + c) ~ ...) / lm(asinh(y) ~ ...); classical vcov(m), sandwich::vcovHC(m, type = 'HC0'..'HC3'); elasticity b * h'(x)x / (g'(y)y) at means or medians")
  ),
  ppml = ppml_cases,
  existence = existence,
  shift = shift_cases,
  contrast = contrast,
  bygroup = bygroup
)
writeLines(to_json(result), out_path)
cat("wrote", out_path, "\n")
for (nm in names(ppml_cases)) cat(nm, "n =", ppml_cases[[nm]]$n, "zeros =", ppml_cases[[nm]]$zeros,
  "refit HC1 change =", format(unclass(ppml_cases[[nm]]$refit_se_change)), "\n")
