library(testthat)
library(trajweave)

test_check("trajweave")
