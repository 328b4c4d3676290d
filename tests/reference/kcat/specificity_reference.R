# Reference values for tests/turnover_test.cpp: the Michaelis–Menten curve refitted by R's nls
# in the form that has Vmax/Km as a parameter, v = a*S/(1 + S/K) with a = Vmax/Km, on R's
# Puromycin data (Treloar 1974; the treated and untreated states), unweighted and, for the
# treated state, with relative weights 1/v^2. Run from this folder:
#   Rscript specificity_reference.R > specificity_reference.csv
# Profile-t limits of a are found by uniroot on the exact profile (each point an nls refit of
# K with a held), tau(c) = sign(c - a) * sqrt(RSS(c) - RSS)/s = -/+ qt(0.975, df), as MASS's
# profile/confint for nls defines them (MASS itself is not needed).
ctl <- nls.control(maxiter = 500, tol = 1e-7)

fit_one <- function(d, w) {
  mm <- nls(rate ~ SSmicmen(conc, Vm, K), data = d, weights = w)  # self-started
  st <- list(a = coef(mm)[["Vm"]] / coef(mm)[["K"]], K = coef(mm)[["K"]])
  nls(rate ~ a * conc / (1 + conc / K), data = d, start = st, weights = w, control = ctl)
}

rss_held <- function(d, w, a, k_start) {
  r <- nls(rate ~ a * conc / (1 + conc / K), data = d, start = list(K = k_start), weights = w, control = ctl)
  deviance(r)
}

profile_limits <- function(fit, d, w) {
  est <- coef(fit); se <- summary(fit)$coefficients["a", "Std. Error"]
  s <- summary(fit)$sigma; rss <- deviance(fit); cut <- qt(0.975, df.residual(fit))
  tau <- function(v) sign(v - est[["a"]]) * sqrt(max(rss_held(d, w, v, est[["K"]]) - rss, 0)) / s
  sapply(c(-1, 1), function(side) {
    k <- 1
    while (abs(tau(est[["a"]] + side * k * se)) < cut) k <- 2 * k
    uniroot(function(v) tau(v) - side * cut, sort(est[["a"]] + side * c(k / 2, k) * se), tol = 1e-13)$root
  })
}

put <- function(name, value) cat(sprintf("%s,%.12g\n", name, value))
cat("quantity,value\n")
cat(sprintf("r_version,%s\n", gsub(",", "", R.version.string)))
cases <- list(treated = list(state = "treated", weighted = FALSE),
              untreated = list(state = "untreated", weighted = FALSE),
              treated_relative = list(state = "treated", weighted = TRUE))
for (name in names(cases)) {
  cs <- cases[[name]]
  d <- Puromycin[Puromycin$state == cs$state, ]
  w <- if (cs$weighted) 1 / d$rate^2 else rep(1, nrow(d))
  fit <- fit_one(d, w)
  co <- coef(fit); se <- summary(fit)$coefficients[, "Std. Error"]
  lim <- profile_limits(fit, d, w)
  put(paste0(name, "_a"), co[["a"]])
  put(paste0(name, "_a_se"), se[["a"]])
  put(paste0(name, "_K"), co[["K"]])
  put(paste0(name, "_rss"), deviance(fit))
  put(paste0(name, "_a_profile_low"), lim[1])
  put(paste0(name, "_a_profile_high"), lim[2])
}
