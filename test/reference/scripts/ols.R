# Reference values for the regression cell functions (FIT, ELASTICITY, ELASTICITIES, EFFECTS,
# SUMMARY), from R's stats package and the sandwich package.
#
# Run from the repository root (relative paths only; not run in CI):
#   Rscript test/reference/scripts/ols.R
# writes test/reference/ols.json.
#
# Datasets that ship with R (package datasets), each in four forms (log-log, log-level, level-log,
# level-level; a log applies to y and/or to every x column that is not binary 0/1):
#   trees             Volume ~ Girth + Height
#   mtcars            mpg ~ hp + wt + am            (am is 0/1: kept in levels under a log x side)
#   LifeCycleSavings  sr ~ pop15 + pop75 + dpi + ddpi
#   airquality        Ozone ~ Solar.R + Wind + Temp (rows with NA dropped listwise: na.omit)
#
# For each fit m <- lm(f, data) (see "formula" in the JSON for the exact formula):
#   coefficients        coef(m)
#   classical           sqrt(diag(vcov(m)))
#   HC0..HC3            sqrt(diag(sandwich::vcovHC(m, type = "HC0".."HC3")))
#   HAC                 sqrt(diag(sandwich::NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE)))
#                       with L = floor(4 * (n / 100)^(2 / 9)), n = rows used
#   t, p                b / se, 2 * pt(-abs(t), df.residual(m))
#   intervals           b -/+ qt((1 + level) / 2, df.residual(m)) * se for level 0.95 and 0.90
#                       (for classical this is confint(m, level = level), checked below)
#   R², adjusted R², sigma, F   summary(m)$r.squared, $adj.r.squared, $sigma, $fstatistic
#   F p-value           pf(F, df1, df2, lower.tail = FALSE)
#   log-likelihood      as.numeric(logLik(m))
#   AIC, BIC            -2 * logLik + 2 * (k + 1), -2 * logLik + (k + 1) * log(n), k counting the
#                       intercept; checked equal to R's AIC(m) and BIC(m), which count the error
#                       variance as a parameter already (attr(logLik(m), "df") == k + 1)
#   elasticities        definitions of docs/interface (not an R function): factor at the means or
#                       medians of the rows used, in original units: log-log 1; log-level x̄;
#                       level-log 1 / ȳ; level-level x̄ / ȳ; elasticity = factor * b,
#                       se = |factor| * se(b), interval = sort(factor * b's interval)
#   percent effects     for level x terms in log-y forms: 100 * (exp(b) - 1); Kennedy (1981)
#                       100 * (exp(b - V / 2) - 1) with V = se^2 of each type; interval
#                       100 * (exp(b's interval ends) - 1)
#
# Every number is printed with sprintf("%.17g") by the small writer below (jsonlite 1.8.4's
# toJSON(digits = NA) prints only 15 significant digits, which would round the references).

suppressPackageStartupMessages({
  library(sandwich)
})

out_path <- file.path("test", "reference", "ols.json")
if (!dir.exists(dirname(out_path))) {
  stop("run this script from the repository root: Rscript test/reference/scripts/ols.R")
}

# ---- a JSON writer that keeps all 17 significant digits -------------------------------------
source(file.path("test", "reference", "scripts", "json17.R"))  # json_num, json_str, to_json, scalar

# ---- the cases -------------------------------------------------------------------------------
cases <- list(
  trees = list(data = datasets::trees, y = "Volume", x = c("Girth", "Height")),
  mtcars = list(data = datasets::mtcars, y = "mpg", x = c("hp", "wt", "am")),
  LifeCycleSavings = list(data = datasets::LifeCycleSavings, y = "sr", x = c("pop15", "pop75", "dpi", "ddpi")),
  airquality = list(data = datasets::airquality, y = "Ozone", x = c("Solar.R", "Wind", "Temp"))
)
forms <- c("log-log", "log-level", "level-log", "level-level")
se_types <- c("classical", "HC0", "HC1", "HC2", "HC3", "HAC")
levels_ci <- c(ci95 = 0.95, ci90 = 0.90)

is_binary <- function(v) all(v %in% c(0, 1))

fit_one <- function(case, form) {
  raw <- case$data[, c(case$y, case$x)]
  used <- na.omit(raw)                              # listwise, as R's default na.action
  n <- nrow(used)
  log_y <- form %in% c("log-log", "log-level")
  log_x <- form %in% c("log-log", "level-log")
  binary <- vapply(case$x, function(v) is_binary(used[[v]]), TRUE)
  x_log <- log_x & !binary
  rhs <- ifelse(x_log, paste0("log(", case$x, ")"), case$x)
  lhs <- if (log_y) paste0("log(", case$y, ")") else case$y
  f <- as.formula(paste(lhs, "~", paste(rhs, collapse = " + ")))
  m <- lm(f, data = raw)                           # na.action = na.omit drops the same rows
  stopifnot(nobs(m) == n)
  b <- coef(m)
  k <- length(b)
  df_res <- df.residual(m)
  L <- floor(4 * (n / 100)^(2 / 9))
  V <- list(
    classical = vcov(m),
    HC0 = vcovHC(m, type = "HC0"),
    HC1 = vcovHC(m, type = "HC1"),
    HC2 = vcovHC(m, type = "HC2"),
    HC3 = vcovHC(m, type = "HC3"),
    HAC = NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE)
  )
  # the HAC matrix is the interface's definition: Bartlett weights 1 - l / (L + 1), no
  # prewhitening, no small-sample factor (checked against the formula written out)
  X <- model.matrix(m)
  u <- X * residuals(m)
  meat <- crossprod(u)
  for (l in seq_len(L)) {
    g <- crossprod(u[(l + 1):n, , drop = FALSE], u[1:(n - l), , drop = FALSE])
    meat <- meat + (1 - l / (L + 1)) * (g + t(g))
  }
  bread <- solve(crossprod(X))
  hac_check <- all.equal(unname(bread %*% meat %*% bread), unname(V$HAC), tolerance = 1e-10)
  if (!isTRUE(hac_check)) stop(paste(deparse(f), hac_check))
  se <- lapply(V, function(v) unname(sqrt(diag(v))))
  tval <- lapply(se, function(s) unname(b / s))
  pval <- lapply(tval, function(t) 2 * pt(-abs(t), df_res))
  ci <- lapply(levels_ci, function(lev) {
    crit <- qt((1 + lev) / 2, df_res)
    lapply(se, function(s) list(lower = unname(b - crit * s), upper = unname(b + crit * s)))
  })
  # classical intervals equal confint()
  for (nm in names(levels_ci)) {
    cf <- confint(m, level = levels_ci[[nm]])
    stopifnot(isTRUE(all.equal(unname(cf[, 1]), ci[[nm]]$classical$lower, tolerance = 1e-13)),
              isTRUE(all.equal(unname(cf[, 2]), ci[[nm]]$classical$upper, tolerance = 1e-13)))
  }

  sm <- summary(m)
  ll <- logLik(m)
  stopifnot(attr(ll, "df") == k + 1)
  aic <- -2 * as.numeric(ll) + 2 * (k + 1)
  bic <- -2 * as.numeric(ll) + (k + 1) * log(n)
  stopifnot(isTRUE(all.equal(aic, AIC(m), tolerance = 1e-14)), isTRUE(all.equal(bic, BIC(m), tolerance = 1e-14)))
  fs <- sm$fstatistic
  summary_out <- list(
    r_squared = scalar(sm$r.squared),
    adj_r_squared = scalar(sm$adj.r.squared),
    sigma = scalar(sm$sigma),
    f_statistic = scalar(unname(fs["value"])),
    f_df1 = scalar(unname(fs["numdf"])),
    f_df2 = scalar(unname(fs["dendf"])),
    f_p_value = scalar(pf(fs["value"], fs["numdf"], fs["dendf"], lower.tail = FALSE)[[1]]),
    log_likelihood = scalar(as.numeric(ll)),
    aic = scalar(aic),
    bic = scalar(bic),
    r_aic = scalar(AIC(m)),
    r_bic = scalar(BIC(m))
  )

  # elasticities at means and at medians of the rows used, in original units
  slope_idx <- seq_along(case$x) + 1
  elasticities <- lapply(c(mean = "mean", median = "median"), function(at) {
    centre <- function(v) if (at == "mean") mean(v) else median(v)
    yc <- centre(used[[case$y]])
    xc <- vapply(case$x, function(v) centre(used[[v]]), 0)
    num <- ifelse(x_log, 1, xc)                       # h'(x̄)·x̄: 1 for log x, x̄ for level x
    den <- if (log_y) 1 else yc                       # g'(ȳ)·ȳ: 1 for log y, ȳ for level y
    fac <- unname(num / den)
    bx <- unname(b[slope_idx])
    list(
      centre_y = scalar(yc),
      centre_x = unname(xc),
      factor = fac,
      estimate = fac * bx,
      se = lapply(se, function(s) abs(fac) * s[slope_idx]),
      intervals = lapply(names(levels_ci), function(nm) {
        lapply(se_types, function(st) {
          lo <- fac * ci[[nm]][[st]]$lower[slope_idx]
          hi <- fac * ci[[nm]][[st]]$upper[slope_idx]
          list(lower = pmin(lo, hi), upper = pmax(lo, hi))
        }) |> setNames(se_types)
      }) |> setNames(names(levels_ci))
    )
  })

  # percent effects of the level x terms in log-y forms
  effects <- NULL
  if (log_y) {
    level_terms <- which(!x_log)
    idx <- level_terms + 1
    if (length(idx) > 0) {
      bx <- unname(b[idx])
      effects <- list(
        terms = case$x[level_terms],
        percent = 100 * expm1(bx),
        corrected = lapply(se, function(s) 100 * expm1(bx - s[idx]^2 / 2)),
        intervals = lapply(names(levels_ci), function(nm) {
          lapply(se_types, function(st) list(
            lower = 100 * expm1(ci[[nm]][[st]]$lower[idx]),
            upper = 100 * expm1(ci[[nm]][[st]]$upper[idx])
          )) |> setNames(se_types)
        }) |> setNames(names(levels_ci))
      )
    } else {
      effects <- list(terms = character(0))
    }
  }

  list(
    formula = scalar(deparse(f)),
    n = scalar(n),
    k = scalar(k),
    df_residual = scalar(df_res),
    hac_lag = scalar(L),
    terms = c("(Intercept)", case$x),
    transforms = c("constant", ifelse(x_log, "log", "level")),
    binary = unname(binary),
    coefficients = unname(b),
    se = se,
    t = tval,
    p = pval,
    intervals = ci,
    summary = summary_out,
    elasticities = elasticities,
    effects = effects
  )
}

# One extra HAC lag length, to check the lags= option: trees, log-log, lag 1
trees_lag1 <- local({
  m <- lm(log(Volume) ~ log(Girth) + log(Height), data = datasets::trees)
  list(
    dataset = scalar("trees"), form = scalar("log-log"), lags = scalar(1),
    command = scalar("sqrt(diag(sandwich::NeweyWest(lm(log(Volume) ~ log(Girth) + log(Height), data = trees), lag = 1, prewhite = FALSE, adjust = FALSE)))"),
    se = unname(sqrt(diag(NeweyWest(m, lag = 1, prewhite = FALSE, adjust = FALSE))))
  )
})

out_cases <- lapply(names(cases), function(nm) {
  case <- cases[[nm]]
  raw <- case$data[, c(case$y, case$x)]
  cols <- lapply(c(case$y, case$x), function(v) as.numeric(raw[[v]]))
  names(cols) <- c(case$y, case$x)
  list(
    y = scalar(case$y),
    x = case$x,
    rows = scalar(nrow(raw)),
    rows_with_na = scalar(sum(!complete.cases(raw))),
    data = cols,                                     # NA written as null: a blank cell
    forms = lapply(forms, function(fm) fit_one(case, fm)) |> setNames(forms)
  )
})
names(out_cases) <- names(cases)

result <- list(
  source = scalar("R stats::lm with sandwich; generated by test/reference/scripts/ols.R (run from the repository root)"),
  r_version = scalar(R.version.string),
  packages = list(
    stats = scalar(as.character(packageVersion("stats"))),
    sandwich = scalar(as.character(packageVersion("sandwich"))),
    datasets = scalar(as.character(packageVersion("datasets")))
  ),
  commands = list(
    fit = scalar("m <- lm(formula, data = <dataset>) with the default na.action (na.omit); formula per form below"),
    classical = scalar("sqrt(diag(vcov(m)))"),
    HC = scalar("sqrt(diag(sandwich::vcovHC(m, type = 'HC0' | 'HC1' | 'HC2' | 'HC3')))"),
    HAC = scalar("sqrt(diag(sandwich::NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE))), L = floor(4 * (n / 100)^(2 / 9))"),
    t_p = scalar("t = b / se; p = 2 * pt(-abs(t), df.residual(m))"),
    intervals = scalar("b -/+ qt((1 + level) / 2, df.residual(m)) * se, level 0.95 (ci95) and 0.90 (ci90); classical ones equal confint(m, level = level)"),
    summary = scalar("summary(m)$r.squared, $adj.r.squared, $sigma, $fstatistic; pf(F, df1, df2, lower.tail = FALSE); logLik(m); AIC = -2 logLik + 2 (k + 1) == AIC(m); BIC = -2 logLik + (k + 1) log(n) == BIC(m)"),
    elasticities = scalar("factor at mean() or median() of the rows used, original units: log-log 1, log-level x, level-log 1/y, level-level x/y; estimate = factor * b; se = abs(factor) * se(b); interval = sort(factor * interval of b)"),
    effects = scalar("level x terms of log-y forms: 100 * expm1(b); 100 * expm1(b - se^2 / 2) per se type (Kennedy 1981); 100 * expm1(interval ends of b)")
  ),
  cases = out_cases,
  extra_hac_lags = trees_lag1
)
writeLines(to_json(result), out_path)
cat("wrote", out_path, "\n")
