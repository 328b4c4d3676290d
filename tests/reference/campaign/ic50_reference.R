# Reference values for tests/campaign_test.cpp: R's nls with the SSfpl self-starting model on
# the dose-response points vzero fitted (dose_points.csv: the simulated plate's unflagged
# sample wells, activity_pct from vzero rates; invented data), one fit per compound.
# Run from this folder: Rscript ic50_reference.R > ic50_reference.csv
# SSfpl(input, A, B, xmid, scal) = A + (B - A)/(1 + exp((xmid - input)/scal)) with
# input = log(x): A is top, B bottom, IC50 = exp(xmid), Hill slope = 1/scal.
d <- read.csv("dose_points.csv")
ctl <- nls.control(maxiter = 500, tol = 1e-7)
form <- activity_pct ~ A + (B - A)/(1 + exp((xmid - log(conc_uM))/scal))
cat("compound,top,bottom,IC50,hill,tolerance\n")
cat(sprintf("r_version,%s,,,,\n", gsub(",", "", R.version.string)))
for (cpd in unique(d$compound)) {
  one <- d[d$compound == cpd, ]
  fit <- nls(activity_pct ~ SSfpl(log(conc_uM), A, B, xmid, scal), data = one)  # self-started
  # refitted from its estimate to a tighter convergence tolerance where nls reaches it (the
  # self-started fit's default tolerance, 1e-5 on the relative offset, is kept otherwise)
  tight <- tryCatch(nls(form, data = one, start = coef(fit), control = ctl), error = function(e) NULL)
  co <- coef(if (is.null(tight)) fit else tight)
  cat(sprintf("%s,%.12g,%.12g,%.12g,%.12g,%s\n", cpd, co[["A"]], co[["B"]], exp(co[["xmid"]]), 1/co[["scal"]],
              if (is.null(tight)) "default" else "1e-7"))
}
