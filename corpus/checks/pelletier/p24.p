% problem: Pelletier 24
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(h1, axiom,
    ~ (? [X] : (s(X) & q(X)))).

fof(h2, axiom,
    ! [X] : (p(X) => (q(X) | r(X)))).

fof(h3, axiom,
    (~ (? [X] : p(X))) => (? [Y] : q(Y))).

fof(h4, axiom,
    ! [X] : ((q(X) | r(X)) => s(X))).

fof(pel24_goal, conjecture,
    ? [X] : (p(X) & r(X))).
