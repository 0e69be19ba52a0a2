module sluice

go 1.26.8
