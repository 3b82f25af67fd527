module fvsweep

go 1.26
