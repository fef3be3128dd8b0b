# Reference values for the break tests and rolling windows (functions/engine/breaks.ts and
# functions/engine/windows.ts), from R packages strucchange, sandwich and lmtest.
#
# Run from the repository root (relative paths only; not run in CI):
#   Rscript test/reference/scripts/breaks.R
# writes test/reference/breaks.json.
#
# Open time series that ship with R and the packages:
#   nile       Nile ~ 1                                  datasets::Nile, 1871-1970 (k = 1)
#   usincexp   log(expenditure) ~ log(income)            strucchange::USIncExp, monthly 1959-2000
#   seatbelts  log(DriversKilled) ~ log(kms) + log(PetrolPrice)   datasets::Seatbelts, 1969-1984
#   grunfeld   log(inv) ~ log(value) + log(capital), time = year, 10 firms x 20 years,
#              rows in firm order (plm::Grunfeld): windows and a break counted in periods
#
# For each series, with X the model matrix (intercept first), at the break `point` (rows in the
# first regime) and D = 1 from row point + 1 on:
#   chow       strucchange::sctest(y ~ 0 + X, type = "Chow", point = point): statistic, p.value
#   rss        lm.fit on the pooled rows, on rows 1..point and on the rest: residual sums of squares
#   interacted mu <- lm(y ~ 0 + b1 + ... + bk + d1 + ... + dk), columns b = X, d = D * X;
#              mr <- lm(y ~ 0 + b1 + ... + bk)
#   wald       lmtest::waldtest(mr, mu, vcov = V, test = "F"): F and p, with V
#              vcov(mu) (classical), sandwich::vcovHC(mu, type = "HC0".."HC3"),
#              sandwich::NeweyWest(mu, lag = L, prewhite = FALSE, adjust = FALSE),
#              L = floor(4 * (n / 100)^(2 / 9))
#   wald_centred  the same waldtest with the non-intercept columns of X centred first: the same
#              hypothesis and statistic, computed on a better-conditioned design (on Seatbelts the
#              uncentred waldtest keeps only about 9.5 digits: 3.3275122851736 against
#              3.3275122861698 centred, for HC0)
#   terms      coef(mu); for each V: se of before (b), after (b + d: sqrt(V_bb + V_dd + 2 V_bd)),
#              difference (d); t = d / se; p = 2 * pt(-|t|, n - 2k)
#   supf       fs <- strucchange::Fstats(y ~ 0 + X, from = 0.15); as.numeric(fs$Fstats) (every
#              candidate), fs$breakpoint, fs$par (lambda);
#              strucchange::sctest(fs, type = "supF"): statistic, p.value
#   rolling    for every window (rows a..b): lm(y ~ 0 + X, subset = a:b); coef; sqrt(diag(.)) of
#              vcov, vcovHC HC0..HC3, NeweyWest(lag = floor(4 * (m / 100)^(2 / 9)), m the
#              window's rows, prewhite = FALSE, adjust = FALSE)
#   hansen     strucchange:::pvalue.Fstats(x, type = "supF", k, lambda) on a grid, and the
#              coefficient table strucchange:::sc.beta.sup itself (Hansen 1997)

suppressPackageStartupMessages({
  library(strucchange)
  library(sandwich)
  library(lmtest)
})

out_path <- file.path("test", "reference", "breaks.json")
if (!dir.exists(dirname(out_path))) {
  stop("run this script from the repository root: Rscript test/reference/scripts/breaks.R")
}
source(file.path("test", "reference", "scripts", "json17.R"))  # json_num, json_str, to_json, scalar

hac_lag <- function(n) floor(4 * (n / 100)^(2 / 9))

covs <- function(m) {
  n <- nobs(m)
  list(
    classical = vcov(m),
    HC0 = vcovHC(m, type = "HC0"), HC1 = vcovHC(m, type = "HC1"),
    HC2 = vcovHC(m, type = "HC2"), HC3 = vcovHC(m, type = "HC3"),
    HAC = NeweyWest(m, lag = hac_lag(n), prewhite = FALSE, adjust = FALSE)
  )
}

break_case <- function(y, X, point) {
  n <- length(y); k <- ncol(X)
  D <- as.numeric(seq_len(n) > point)
  Z <- cbind(X, D * X)
  colnames(Z) <- c(paste0("b", 1:k), paste0("d", 1:k))
  dat <- data.frame(y = y, Z)
  mu <- lm(reformulate(c("0", colnames(Z)), "y"), data = dat)
  mr <- lm(reformulate(c("0", paste0("b", 1:k)), "y"), data = dat)
  ch <- sctest(y ~ 0 + X, type = "Chow", point = point)
  rss <- function(rows) sum(lm.fit(X[rows, , drop = FALSE], y[rows])$residuals^2)
  V <- covs(mu)
  # The same test on the centred regressors (the intercept absorbs the means): the Wald statistic
  # is invariant to this change of columns, and the better-conditioned design keeps more digits.
  Xc <- X
  if (k > 1) Xc[, -1] <- scale(X[, -1], scale = FALSE)
  Zc <- cbind(Xc, D * Xc)
  colnames(Zc) <- colnames(Z)
  datc <- data.frame(y = y, Zc)
  muc <- lm(reformulate(c("0", colnames(Zc)), "y"), data = datc)
  mrc <- lm(reformulate(c("0", paste0("b", 1:k)), "y"), data = datc)
  Vc <- covs(muc)
  b <- coef(mu)[1:k]; d <- coef(mu)[k + 1:k]
  wald <- list(); wald_centred <- list(); terms <- list()
  for (t in names(V)) {
    w <- waldtest(mr, mu, vcov = V[[t]], test = "F")
    wald[[t]] <- list(F = scalar(w$F[2]), p = scalar(w[["Pr(>F)"]][2]), df1 = scalar(-w$Df[2]), df2 = scalar(w$Res.Df[2]))
    w <- waldtest(mrc, muc, vcov = Vc[[t]], test = "F")
    wald_centred[[t]] <- list(F = scalar(w$F[2]), p = scalar(w[["Pr(>F)"]][2]))
    v <- V[[t]]
    se_b <- sqrt(diag(v)[1:k]); se_d <- sqrt(diag(v)[k + 1:k])
    se_a <- sqrt(diag(v)[1:k] + diag(v)[k + 1:k] + 2 * diag(v[1:k, k + 1:k, drop = FALSE]))
    tt <- d / se_d
    terms[[t]] <- list(se_before = unname(se_b), se_after = unname(se_a), se_difference = unname(se_d),
                       t = unname(tt), p = unname(2 * pt(-abs(tt), n - 2 * k)))
  }
  list(point = scalar(point), n = scalar(n), k = scalar(k), hac_lag = scalar(hac_lag(n)),
       chow = list(F = scalar(unname(ch$statistic)), p = scalar(ch$p.value)),
       rss = list(pooled = scalar(rss(1:n)), before = scalar(rss(1:point)), after = scalar(rss((point + 1):n))),
       before = unname(b), after = unname(b + d), difference = unname(d),
       wald = wald, wald_centred = wald_centred, terms = terms)
}

supf_case <- function(y, X, trim = 0.15) {
  fs <- Fstats(y ~ 0 + X, from = trim)
  st <- sctest(fs, type = "supF")
  n <- length(y); k <- ncol(X)
  from <- floor(trim * n); to <- n - from
  if (from < k + 1) from <- k + 1
  if (to > n - k - 1) to <- n - k - 1
  stats <- as.numeric(fs$Fstats)
  stopifnot(length(stats) == to - from + 1)
  list(trim = scalar(trim), from = scalar(from), to = scalar(to), lambda = scalar(fs$par),
       breakpoint = scalar(fs$breakpoint), statistic = scalar(unname(st$statistic)),
       p = scalar(st$p.value), stats = stats)
}

rolling_case <- function(y, X, window, step, expanding = FALSE) {
  n <- length(y)
  out <- list()
  ends <- if (expanding) seq(window, n, by = step) else seq(window, n, by = step)
  starts <- if (expanding) rep(1, length(ends)) else seq(1, n - window + 1, by = step)
  if (!expanding) ends <- starts + window - 1
  for (w in seq_along(starts)) {
    rows <- starts[w]:ends[w]
    m <- lm(y[rows] ~ 0 + X[rows, , drop = FALSE])
    V <- covs(m)
    out[[w]] <- list(first = scalar(starts[w]), last = scalar(ends[w]), coef = unname(coef(m)),
                     se = lapply(V, function(v) unname(sqrt(diag(v)))))
  }
  list(window = scalar(window), step = scalar(step), expanding = scalar(expanding), windows = out)
}

series <- list()

# Nile: the annual flow of the river Nile at Aswan; the classic break after the dam of 1898.
y <- as.numeric(Nile); X <- cbind("(Intercept)" = rep(1, length(y)))
series$nile <- list(names = colnames(X), y = y, X = lapply(seq_len(ncol(X)), function(j) X[, j]),
                    start_year = scalar(1871),
                    break_at = break_case(y, X, 28), supf = supf_case(y, X),
                    rolling = list(rolling_case(y, X, 30, 10)))

# USIncExp: US personal income and consumption expenditure; log-log: the income elasticity.
data("USIncExp", package = "strucchange")
y <- log(as.numeric(USIncExp[, "expenditure"])); inc <- log(as.numeric(USIncExp[, "income"]))
X <- cbind("(Intercept)" = 1, "log(income)" = inc)
series$usincexp <- list(names = colnames(X), y = y, X = lapply(seq_len(ncol(X)), function(j) X[, j]),
                        break_at = break_case(y, X, 200), supf = supf_case(y, X),
                        rolling = list(rolling_case(y, X, 120, 40), rolling_case(y, X, 120, 60, expanding = TRUE)))

# Seatbelts: UK drivers killed; log-log in distance driven and the petrol price; the seat-belt law
# took effect in February 1983 (row 170), so the second regime starts at row 170.
sb <- datasets::Seatbelts
y <- log(as.numeric(sb[, "DriversKilled"]))
X <- cbind("(Intercept)" = 1, "log(kms)" = log(as.numeric(sb[, "kms"])), "log(PetrolPrice)" = log(as.numeric(sb[, "PetrolPrice"])))
series$seatbelts <- list(names = colnames(X), y = y, X = lapply(seq_len(ncol(X)), function(j) X[, j]),
                         break_at = break_case(y, X, 169), supf = supf_case(y, X),
                         supf_trim25 = supf_case(y, X, 0.25),
                         rolling = list(rolling_case(y, X, 60, 12)))

# Grunfeld: 10 firms x 20 years, rows by firm then year; windows of 8 years moved by 4, and a break
# from 1945 on, with the rows taken in year order (stable: firm order within a year).
data("Grunfeld", package = "plm")
g <- Grunfeld
Xg <- cbind("(Intercept)" = 1, "log(value)" = log(g$value), "log(capital)" = log(g$capital))
yg <- log(g$inv)
years <- sort(unique(g$year))
gw <- list()
for (s in seq(1, length(years) - 8 + 1, by = 4)) {
  yrs <- years[s:(s + 7)]
  rows <- which(g$year %in% yrs)
  m <- lm(yg[rows] ~ 0 + Xg[rows, , drop = FALSE])
  V <- covs(m)
  gw[[length(gw) + 1]] <- list(from = scalar(min(yrs)), to = scalar(max(yrs)), n = scalar(length(rows)),
                                coef = unname(coef(m)), se = lapply(V[c("classical", "HC0", "HC1", "HC2", "HC3")], function(v) unname(sqrt(diag(v)))))
}
ord <- order(g$year, seq_len(nrow(g)))
series$grunfeld <- list(names = colnames(Xg), y = yg, X = lapply(seq_len(ncol(Xg)), function(j) Xg[, j]),
                        year = g$year, firm = as.numeric(g$firm),
                        windows = gw,
                        break_1945 = break_case(yg[ord], Xg[ord, , drop = FALSE], sum(g$year < 1945)))

# Hansen (1997) p-values on a grid, and the coefficient table.
grid <- list()
for (k in c(1, 2, 3, 5, 10, 20, 40)) for (trim in c(0.05, 0.1, 0.15, 0.25, 0.35, 0.45)) {
  n <- 1000; from <- floor(trim * n); to <- n - from
  lambda <- ((n - from) * to) / (from * (n - to))
  for (x in c(0.5, 2, 5, 8, 12, 20, 35, 60)) {
    grid[[length(grid) + 1]] <- list(k = scalar(k), lambda = scalar(lambda), x = scalar(x),
                                     p = scalar(strucchange:::pvalue.Fstats(x, type = "supF", k = k, lambda = lambda)))
  }
}
# λ = 1 (τ = 0.5) and λ near the table's ends
for (lambda in c(1, 1.0001, 1e6)) grid[[length(grid) + 1]] <- list(k = scalar(3), lambda = scalar(lambda), x = scalar(9),
  p = scalar(strucchange:::pvalue.Fstats(9, type = "supF", k = 3, lambda = lambda)))
beta <- strucchange:::sc.beta.sup

result <- list(
  r_version = scalar(R.version.string),
  packages = list(strucchange = scalar(as.character(packageVersion("strucchange"))),
                  sandwich = scalar(as.character(packageVersion("sandwich"))),
                  lmtest = scalar(as.character(packageVersion("lmtest"))),
                  plm = scalar(as.character(packageVersion("plm")))),
  series = series,
  hansen = list(grid = grid, table = list(b0 = unname(beta[, 1]), b1 = unname(beta[, 2]), df = unname(beta[, 3])))
)
writeLines(to_json(result), out_path)
cat("wrote", out_path, "\n")
