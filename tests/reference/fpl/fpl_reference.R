# Reference values for tests/dose_response_test.cpp: R's nls with the SSfpl self-starting
# model on doses.csv (invented data), and the same curve with top = 100 and bottom = 0 held.
# Run from this folder: Rscript fpl_reference.R > fpl_reference.csv
# SSfpl(input, A, B, xmid, scal) = A + (B - A)/(1 + exp((xmid - input)/scal)) with
# input = log(x): A is top, B bottom, IC50 = exp(xmid), Hill slope = 1/scal.
# Profile-t limits are found by uniroot on the exact profile (each point a refit of the
# other parameters), tau(c) = sign(c - est) * sqrt(RSS(c) - RSS)/s = -/+ qt(0.975, df).
d <- read.csv("doses.csv")
form_full <- quote(A + (B - A)/(1 + exp((xmid - log(inhibitor_uM))/scal)))
form_held <- quote(100 + (0 - 100)/(1 + exp((xmid - log(inhibitor_uM))/scal)))  # A = 100, B = 0
ctl <- nls.control(maxiter = 500, tol = 1e-7)

# Refit `form` with parameter `name` held at `value`; the residual sum of squares.
rss_held <- function(form, name, value, start) {
  f <- do.call(substitute, list(form, setNames(list(value), name)))
  r <- nls(as.formula(call("~", quote(activity), f)), data = d, start = start[setdiff(names(start), name)],
           control = ctl)
  deviance(r)
}

profile_limits <- function(fit, form, name) {
  est <- coef(fit); se <- summary(fit)$coefficients[, "Std. Error"]
  s <- summary(fit)$sigma; rss <- deviance(fit); cut <- qt(0.975, df.residual(fit))
  tau <- function(v) sign(v - est[[name]]) * sqrt(max(rss_held(form, name, v, est) - rss, 0))/s
  sapply(c(-1, 1), function(side) {
    k <- 1
    while (abs(tau(est[[name]] + side * k * se[[name]])) < cut) k <- 2 * k
    uniroot(function(v) tau(v) - side * cut, sort(est[[name]] + side * c(k/2, k) * se[[name]]),
            tol = 1e-13)$root
  })
}

put <- function(name, value) cat(sprintf("%s,%.12g\n", name, value))
cat("quantity,value\n")
cat(sprintf("r_version,%s\n", gsub(",", "", R.version.string)))

fit <- nls(activity ~ SSfpl(log(inhibitor_uM), A, B, xmid, scal), data = d)  # self-started
# refitted from its estimate to a tighter convergence tolerance
full <- nls(as.formula(call("~", quote(activity), form_full)), data = d, start = coef(fit), control = ctl)
co <- coef(full); se <- summary(full)$coefficients[, "Std. Error"]
for (p in names(co)) {
  put(paste0("free_", p), co[[p]])
  put(paste0("free_", p, "_se"), se[[p]])
  lim <- profile_limits(full, form_full, p)
  put(paste0("free_", p, "_profile_low"), lim[1])
  put(paste0("free_", p, "_profile_high"), lim[2])
}
put("free_rss", deviance(full))
put("free_residual_sd", summary(full)$sigma)
put("free_df", df.residual(full))
put("free_aic", AIC(full))

held <- nls(as.formula(call("~", quote(activity), form_held)), data = d, start = co[c("xmid", "scal")], control = ctl)
co <- coef(held); se <- summary(held)$coefficients[, "Std. Error"]
for (p in names(co)) {
  put(paste0("held_", p), co[[p]])
  put(paste0("held_", p, "_se"), se[[p]])
  lim <- profile_limits(held, form_held, p)
  put(paste0("held_", p, "_profile_low"), lim[1])
  put(paste0("held_", p, "_profile_high"), lim[2])
}
put("held_rss", deviance(held))
put("held_df", df.residual(held))
put("held_aic", AIC(held))
