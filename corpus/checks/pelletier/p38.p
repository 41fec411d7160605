% problem: Pelletier 38
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(pel38_goal, conjecture,
    (! [X] : ((p(a) & (p(X) => (? [Y] : (p(Y) & r(X, Y))))) => (? [Z, W] : (p(Z) & r(X, W) & r(W, Z))))) <=> (! [X] : ((~p(a) | p(X) | (? [Z, W] : (p(Z) & r(X, W) & r(W, Z)))) & (~p(a) | ~(? [Y] : (p(Y) & r(X, Y))) | (? [Z, W] : (p(Z) & r(X, W) & r(W, Z))))))).
