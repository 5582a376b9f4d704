import { extendZodWithOpenApi } from "@asteasolutions/zod-to-openapi";
import { z } from "zod";

/**
 * zod with `.openapi(name, metadata)`: a schema named this way becomes a component of the OpenAPI
 * document and is referred to by $ref wherever it is used. Every response schema imports z from here.
 */
extendZodWithOpenApi(z);

export { z };
