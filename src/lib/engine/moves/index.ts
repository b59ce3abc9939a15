export { assignMoves } from './assign';
export type { Assignment, Move, MoveStart, MoveTarget } from './assign';
export { routeOrder, routeLength } from './route';
export type { Distance, Point, Route, RouteOptions } from './route';
