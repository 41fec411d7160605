% problem: Pelletier 28
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    ! [X] : (p(X) => (! [Y] : q(Y)))).

fof(h2, axiom,
    (! [X] : (q(X) | r(X))) => (? [X] : (q(X) & s(X)))).

fof(h3, axiom,
    (? [X] : s(X)) => (! [X] : (f(X) => g(X)))).

fof(pel28_goal, conjecture,
    ! [X] : ((p(X) & f(X)) => g(X))).
