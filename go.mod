module morsel

go 1.26.8
