% problem: Pelletier 25
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic
% note: uncertain: the second premise is written here as f(x) -> not (g(x) and r(x)).
%   The form remembered first, f(x) -> (not g(x) and r(x)), makes the premises
%   contradict each other together with the first and third, so the consistent
%   reading was chosen; checked by hand: the conjecture follows, and the premises
%   have a model (one element with p, q, g, f true and r false).

fof(h1, axiom,
    ? [X] : p(X)).

fof(h2, axiom,
    ! [X] : (f(X) => ~ (g(X) & r(X)))).

fof(h3, axiom,
    ! [X] : (p(X) => (g(X) & f(X)))).

fof(h4, axiom,
    (! [X] : (p(X) => q(X))) | (? [X] : (p(X) & r(X)))).

fof(pel25_goal, conjecture,
    ? [X] : (q(X) & p(X))).
