% problem: Pelletier 37
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [Z] : ? [W] : ! [X] : ? [Y] : ((p(X, Z) => p(Y, W)) & p(Y, Z) & (p(Y, W) => (? [U] : q(U, W))))).

fof(h2, axiom,
    ! [X, Z] : (~p(X, Z) => (? [Y] : q(Y, Z)))).

fof(h3, axiom,
    (? [X, Y] : q(X, Y)) => (! [X] : r(X, X))).

fof(pel37_goal, conjecture,
    ! [X] : ? [Y] : r(X, Y)).
