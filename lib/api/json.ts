/**
 * The type a value has after `Response.json` and `response.json()`: dates
 * become ISO strings, everything else keeps its shape. Response types are
 * written as `Jsonified<Row>` so the route's row type and the client's view
 * of it cannot drift apart.
 */
export type Jsonified<T> = T extends Date
  ? string
  : T extends (infer Item)[]
    ? Jsonified<Item>[]
    : T extends object
      ? { [Key in keyof T]: Jsonified<T[Key]> }
      : T;
