[Version] 2.0
# Hz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Colour] blue
[Network Data]
1e6 0.1 0.2 0.5 -0.1 0.01 0.002 0.3 -0.2
[End]
