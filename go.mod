module keyceiling

go 1.26
