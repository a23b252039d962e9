# Exports time series from R's built-in `datasets` package as JSON for the
# accuracy fixture. Run by make_fixture.py (Rscript make_fixture.R <out.json>);
# no packages beyond base R are needed, so the JSON is written by hand.
#
# Each entry: name, source (the reference given in R's help page for the
# dataset), frequency (the engine's frequency name), interval (true sampling
# interval), start (first period label), values.

args <- commandArgs(trailingOnly = TRUE)
out <- if (length(args) >= 1) args[[1]] else "r-series.json"

# name, R expression, engine frequency, sampling interval, source
specs <- list(
  list("AirPassengers", "AirPassengers", "month", "month",
       "R datasets::AirPassengers; Box, Jenkins and Reinsel (1976), series G"),
  list("nottem", "nottem", "month", "month",
       "R datasets::nottem; Anderson (1976), Nottingham Castle air temperatures"),
  list("co2", "co2", "month", "month",
       "R datasets::co2; Keeling and Whorf, Mauna Loa CO2 (Scripps)"),
  list("USAccDeaths", "USAccDeaths", "month", "month",
       "R datasets::USAccDeaths; Brockwell and Davis (1991), NSC accidental deaths"),
  list("ldeaths", "ldeaths", "month", "month",
       "R datasets::ldeaths; Diggle (1990), UK lung disease deaths, both sexes"),
  list("mdeaths", "mdeaths", "month", "month",
       "R datasets::mdeaths; Diggle (1990), UK lung disease deaths, males"),
  list("fdeaths", "fdeaths", "month", "month",
       "R datasets::fdeaths; Diggle (1990), UK lung disease deaths, females"),
  list("UKDriverDeaths", "UKDriverDeaths", "month", "month",
       "R datasets::UKDriverDeaths; Harvey and Durbin (1986), UK car drivers killed or seriously injured"),
  list("Seatbelts.front", "Seatbelts[, 'front']", "month", "month",
       "R datasets::Seatbelts column front; Harvey and Durbin (1986), front-seat passengers killed or seriously injured"),
  list("Seatbelts.rear", "Seatbelts[, 'rear']", "month", "month",
       "R datasets::Seatbelts column rear; Harvey and Durbin (1986), rear-seat passengers killed or seriously injured"),
  list("Seatbelts.kms", "Seatbelts[, 'kms']", "month", "month",
       "R datasets::Seatbelts column kms; Harvey and Durbin (1986), distance driven"),
  list("UKgas", "UKgas", "quarter", "quarter",
       "R datasets::UKgas; Durbin and Koopman (2001), UK quarterly gas consumption"),
  list("JohnsonJohnson", "JohnsonJohnson", "quarter", "quarter",
       "R datasets::JohnsonJohnson; Shumway and Stoffer (2000), quarterly earnings per share"),
  list("austres", "austres", "quarter", "quarter",
       "R datasets::austres; Brockwell and Davis (1996), Australian residents"),
  list("Nile", "Nile", "year", "year",
       "R datasets::Nile; Cobb (1978), Balke (1993), annual Nile flow at Aswan"),
  list("LakeHuron", "LakeHuron", "year", "year",
       "R datasets::LakeHuron; Brockwell and Davis (1991), Lake Huron level"),
  list("lynx", "lynx", "year", "year",
       "R datasets::lynx; Campbell and Walker (1977), Canadian lynx trappings"),
  list("sunspot.year", "sunspot.year", "year", "year",
       "R datasets::sunspot.year; Tong (1996), yearly sunspot numbers"),
  list("nhtemp", "nhtemp", "year", "year",
       "R datasets::nhtemp; Vaux (1941), New Haven mean annual temperature"),
  list("airmiles", "airmiles", "year", "year",
       "R datasets::airmiles; Brown (1963), US airline revenue passenger miles"),
  list("discoveries", "discoveries", "year", "year",
       "R datasets::discoveries; The World Almanac and Book of Facts (1975), great inventions and discoveries"),
  list("treering", "treering", "year", "year",
       "R datasets::treering; Fritts et al. (1971), Great Basin bristlecone pine ring widths"),
  list("uspop", "uspop", "year", "decade",
       "R datasets::uspop; McNeil (1977), US census population"),
  list("WWWusage", "WWWusage", "year", "minute",
       "R datasets::WWWusage; Durbin and Koopman (2001), users connected to a server"),
  list("BJsales", "BJsales", "year", "unknown (regular)",
       "R datasets::BJsales; Box and Jenkins (1976), series M sales"),
  list("lh", "lh", "year", "10 minutes",
       "R datasets::lh; Diggle (1990), luteinizing hormone in blood samples")
)

esc <- function(s) gsub('"', '\\\\"', s)

label <- function(x, freq) {
  t0 <- tsp(x)[1]
  f <- frequency(x)
  year <- floor(t0 + 1e-8)
  cycle <- round((t0 - year) * f) + 1
  if (freq == "month") sprintf("%04d-%02d", year, cycle)
  else if (freq == "quarter") sprintf("%04d-Q%d", year, cycle)
  else sprintf("%04d", year)
}

entries <- character(0)
for (s in specs) {
  x <- eval(parse(text = s[[2]]))
  if (!is.ts(x)) stop(paste(s[[1]], "is not a time series"))
  if (any(is.na(x))) stop(paste(s[[1]], "has missing values"))
  vals <- paste(formatC(as.numeric(x), digits = 15, format = "g"), collapse = ",")
  vals <- gsub(" ", "", vals)
  entries <- c(entries, sprintf(
    '{"name":"%s","expr":"%s","frequency":"%s","interval":"%s","rFrequency":%s,"start":"%s","source":"%s","values":[%s]}',
    esc(s[[1]]), esc(s[[2]]), s[[3]], s[[4]], format(frequency(x)), label(x, s[[3]]), esc(s[[5]]), vals))
}

json <- sprintf('{"rVersion":"%s","series":[\n%s\n]}\n',
                esc(R.version.string), paste(entries, collapse = ",\n"))
writeLines(json, out, sep = "")
